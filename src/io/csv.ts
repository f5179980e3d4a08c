import Papa from 'papaparse';
import { ImportError, ProblemLog, fileError, showValue } from './problems.js';
import { readNumber } from './numbers.js';
import { StopCollector, type StopSet } from './stopset.js';
import { FIELD_NAMES, MAX_ID_LENGTH, pickField, type FieldChoice } from './fields.js';

export type Delimiter = ',' | ';' | '\t';

export interface CsvOptions extends FieldChoice {
  /** Column delimiter; detected from the header line when not given. */
  readonly delimiter?: Delimiter;
}

/**
 * Detects the delimiter from the header line: the one of comma, semicolon and tab that occurs
 * most often outside double quotes (comma on a tie). Header names rarely hold any of them.
 */
export function detectDelimiter(headerLine: string): Delimiter {
  const counts = { ',': 0, ';': 0, '\t': 0 };
  let quoted = false;
  for (const ch of headerLine) {
    if (ch === '"') quoted = !quoted;
    else if (!quoted && (ch === ',' || ch === ';' || ch === '\t')) counts[ch]++;
  }
  if (counts[';'] > counts[','] && counts[';'] >= counts['\t']) return ';';
  if (counts['\t'] > counts[',']) return '\t';
  return ',';
}

const DELIMITER_NAME: Record<Delimiter, string> = { ',': 'comma', ';': 'semicolon', '\t': 'tab' };

/**
 * Parses stops from CSV text with a header row (papaparse does the quoting, CRLF and delimiter
 * work). Pure: text in, a StopSet or an ImportError out. Every problem names the file, the row
 * (as a spreadsheet counts it, header = row 1), the column and the value.
 */
export function parseStopsCsv(text: string, file: string, options: CsvOptions = {}): StopSet {
  let body = text.charCodeAt(0) === 0xfeff ? text.slice(1) : text;
  if (body.trim() === '') throw fileError(file, 'empty-file', 'the file is empty: it needs a header row (e.g. id,lat,lon,demand) and one row per stop');
  // Excel's "sep=;" first line names the delimiter; it is not the header. Rows keep counting it.
  const sep = excelSepLine(body);
  if (sep) body = body.slice(sep.length);
  const rowOffset = sep ? 1 : 0;
  body = oneKindOfLineBreak(body);
  const firstBreak = body.search(/\r?\n|\r/);
  const headerLine = firstBreak < 0 ? body : body.slice(0, firstBreak);
  const delimiter = options.delimiter ?? sep?.delimiter ?? detectDelimiter(headerLine);
  const log = new ProblemLog(file);

  let header: string[] | null = null;
  let latAt = -1;
  let lonAt = -1;
  let idAt = -1;
  let demandAt = -1;
  let collector: StopCollector | null = null;
  let row = rowOffset;
  let emptyRows = 0;
  let lastRowEmpty = false;
  let decimalCommas = 0;
  let headerProblem: ImportError | null = null;
  const allowComma = delimiter !== ',';

  const onHeader = (names: string[]): void => {
    header = names.map((s) => s.trim());
    const need: { message: string; field?: string }[] = [];
    const lat = pickField(header, 'lat', options.lat);
    const lon = pickField(header, 'lon', options.lon);
    const id = pickField(header, 'id', options.id);
    const demand = options.demand === null ? -1 : pickField(header, 'demand', options.demand);
    const columns = listColumns(header);
    for (const [role, got] of [['latitude', lat], ['longitude', lon], ['id', id], ['demand', demand]] as const) {
      if (typeof got === 'object') need.push({ field: got.missing, message: `the ${role} column "${got.missing}" was asked for but the header has only ${columns}` });
    }
    if (lat === -1) need.push({ message: `no latitude column: name one ${FIELD_NAMES.lat.slice(0, 3).join(', ')} or choose it with --lat; the header has ${columns}` });
    if (lon === -1) need.push({ message: `no longitude column: name one ${FIELD_NAMES.lon.slice(0, 4).join(', ')} or choose it with --lon; the header has ${columns}` });
    if (need.length > 0) {
      const hint = header.length <= 1 ? ` (only one column was found with the ${DELIMITER_NAME[delimiter]} delimiter; Zoneplan reads comma-, semicolon- or tab-separated files)` : '';
      headerProblem = new ImportError(
        file,
        need.map((n) => ({ severity: 'error' as const, file, code: 'header', row: 1 + rowOffset, ...(n.field !== undefined ? { field: n.field } : {}), message: n.message + hint })),
      );
      return;
    }
    latAt = lat as number;
    lonAt = lon as number;
    idAt = id as number;
    demandAt = demand as number;
    collector = new StopCollector(log, 'row');
  };

  const onRow = (cells: string[], unclosedQuote: boolean): void => {
    row++;
    if (row === 1 + rowOffset) {
      if (unclosedQuote) {
        headerProblem = fileError(file, 'unclosed-quote', `a double quote in the header is never closed, so the whole file was read as the header; close the quote or remove it`, { row });
        return;
      }
      onHeader(cells);
      return;
    }
    if (headerProblem || !collector || !header) return;
    if (unclosedQuote) {
      // Papaparse read everything from the open quote to the end of the file into one cell.
      const at = cells.length - 1;
      log.error({
        code: 'unclosed-quote',
        row,
        field: header[at] ?? `column ${at + 1}`,
        value: showValue(cells[at] ?? ''),
        message: 'a double quote in this cell is never closed, so the rest of the file was read into it; close the quote (a quote inside a quoted cell is written "") or remove it',
      });
      return;
    }
    if (cells.every((c) => c.trim() === '')) {
      emptyRows++;
      lastRowEmpty = true;
      return;
    }
    lastRowEmpty = false;
    let bad = false;
    // More cells than header columns: a cell split in two (e.g. 52,5 in a comma file) would shift
    // every value after it. Empty trailing cells (a spreadsheet's extra delimiters) are harmless.
    for (let at = header.length; at < cells.length; at++) {
      if (cells[at]!.trim() === '') continue;
      log.error({
        code: 'extra-cells',
        row,
        field: `column ${at + 1}`,
        value: showValue(cells[at]!),
        message: `the row has ${cells.length} cells but the header only ${header.length} columns${delimiter === ',' ? ' (a decimal comma such as 52,5 in a comma-separated file splits a number in two: use a decimal point, quote the cell, or save the file with semicolons)' : ''}`,
      });
      return; // the cells after the split are shifted: checking them would only mislead
    }
    const coordinate = (at: number, name: string, lo: number, hi: number): number => {
      const raw = cells[at];
      const field = header![at]!;
      if (raw === undefined) {
        log.error({ code: 'missing-field', row, field, message: `the row has ${cells.length} cell${cells.length === 1 ? '' : 's'} and no ${name}` });
        bad = true;
        return 0;
      }
      const cell = readNumber(raw, allowComma);
      if (!cell.ok) {
        const message =
          cell.reason === 'empty' ? `${name} is missing` : cell.reason === 'not-finite' ? `${name} must be a finite number` : `${name} is not a number${looksDms(raw) ? ' (degrees-minutes-seconds must be written as decimal degrees, e.g. 48.8566)' : ''}`;
        log.error({ code: cell.reason === 'empty' ? 'missing-coordinate' : 'bad-coordinate', row, field, value: showValue(raw), message });
        bad = true;
        return 0;
      }
      if (cell.decimalComma) decimalCommas++;
      if (cell.value < lo || cell.value > hi) {
        log.error({ code: name === 'latitude' ? 'lat-range' : 'lon-range', row, field, value: showValue(raw), message: `${name} must be between ${lo} and ${hi}` });
        bad = true;
      }
      return cell.value;
    };
    const lat = coordinate(latAt, 'latitude', -90, 90);
    const lon = coordinate(lonAt, 'longitude', -180, 180);
    let demand = 1;
    if (demandAt >= 0) {
      const raw = cells[demandAt];
      const field = header[demandAt]!;
      const cell = readNumber(raw, allowComma);
      if (!cell.ok) {
        const message =
          cell.reason === 'empty' ? 'demand is empty: write 0 for a stop with no workload' : cell.reason === 'not-finite' ? 'demand must be a finite number' : 'demand is not a number';
        log.error({ code: 'bad-demand', row, field, value: showValue(raw ?? ''), message });
        bad = true;
      } else if (cell.value < 0) {
        log.error({ code: 'negative-demand', row, field, value: showValue(raw), message: 'demand must not be negative' });
        bad = true;
      } else {
        if (cell.decimalComma) decimalCommas++;
        demand = cell.value;
      }
    }
    let id = String(row);
    if (idAt >= 0) {
      id = (cells[idAt] ?? '').trim();
      if (id === '') {
        log.error({ code: 'missing-id', row, field: header[idAt]!, message: 'id is empty: every stop needs an id (or leave the id column out to number stops by row)' });
        bad = true;
      } else if (id.length > MAX_ID_LENGTH) {
        log.error({ code: 'long-id', row, field: header[idAt]!, value: showValue(id), message: `id is ${id.length} characters long; ids are at most ${MAX_ID_LENGTH}` });
        bad = true;
      }
    }
    if (!bad) collector.add(id, lon, lat, demand, row);
  };

  Papa.parse<string[]>(body, {
    delimiter,
    header: false,
    skipEmptyLines: false,
    step: (result) => onRow(result.data, result.errors.some((e) => e.code === 'MissingQuotes')),
  });

  if (headerProblem) throw headerProblem;
  if (!collector) throw fileError(file, 'empty-file', 'the file has no usable header row');
  const c = collector as StopCollector;
  if (c.count === 0 && log.ok) throw fileError(file, 'no-stops', 'the file has a header but no stop rows');
  // The line break that ends the last row is not an empty row.
  if (lastRowEmpty) emptyRows--;
  if (emptyRows > 0) log.warn({ code: 'empty-rows', count: emptyRows, message: `${emptyRows} empty row${emptyRows === 1 ? '' : 's'} skipped` });
  if (decimalCommas > 0) {
    log.warn({ code: 'decimal-comma', count: decimalCommas, message: `${decimalCommas} number${decimalCommas === 1 ? '' : 's'} written with a decimal comma (e.g. 48,85) read as decimal point numbers; the ${DELIMITER_NAME[delimiter]} delimiter makes this unambiguous` });
  }
  const h = header as unknown as string[];
  return c.finish(file, 'csv', {
    id: idAt >= 0 ? h[idAt]! : null,
    lat: h[latAt]!,
    lon: h[lonAt]!,
    demand: demandAt >= 0 ? h[demandAt]! : null,
  });
}

/**
 * Papaparse takes the line break of the first line for the whole file, so a file that mixes
 * CRLF, LF and CR (rows pasted together from different systems) would have rows run together
 * into cells. Such a file gets LF everywhere; one kind of line break is left as it is.
 */
export function oneKindOfLineBreak(body: string): string {
  const crlf = body.includes('\r\n');
  const lf = /(^|[^\r])\n/.test(body);
  const cr = /\r(?!\n)/.test(body);
  return Number(crlf) + Number(lf) + Number(cr) > 1 ? body.replace(/\r\n?/g, '\n') : body;
}

/** Excel's first line "sep=X" (X one of , ; tab), with its line break. */
export function excelSepLine(body: string): { length: number; delimiter: Delimiter } | null {
  const m = /^sep=([,;\t])[ ]*(\r\n|\n|\r)/i.exec(body);
  return m ? { length: m[0].length, delimiter: m[1] as Delimiter } : null;
}

/** Header names for a message: escaped, at most 12 of them (a binary or one-line file has thousands). */
export function listColumns(header: readonly string[]): string {
  if (header.length === 0) return '(none)';
  const shown = header.slice(0, 12).map((h) => `"${showValue(h)}"`).join(', ');
  return header.length > 12 ? `${shown}, ... (${header.length} columns)` : shown;
}

function looksDms(s: string): boolean {
  return /\d\s*[°º]|\d+\s*['′]\s*\d|[NSEW]\s*$/i.test(s.trim());
}
