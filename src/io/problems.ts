/** One thing wrong (error: the import stops) or odd (warning: it goes on) in an input file. */
export interface Problem {
  readonly severity: 'error' | 'warning';
  /** Stable short name of the kind of problem, e.g. 'lat-range'. */
  readonly code: string;
  readonly file: string;
  /** CSV row as a spreadsheet counts it (the header is row 1). */
  readonly row?: number;
  /** GeoJSON feature index, 0-based as in the file's "features" array. */
  readonly feature?: number;
  /** Column or property name. */
  readonly field?: string;
  /** The offending value, as written in the file (shortened when long). */
  readonly value?: string;
  /** What is wrong and, where it helps, what to do. */
  readonly message: string;
  /** For a warning that stands for many rows: how many. */
  readonly count?: number;
}

/** Shortens a value for a message: long cells are cut, control characters shown escaped. */
export function showValue(v: unknown): string {
  // JSON.stringify writes Infinity and NaN (e.g. a GeoJSON 1e999 read by JSON.parse) as "null".
  let s: string;
  if (typeof v === 'string') s = v.length > 200 ? v.slice(0, 200) : v;
  else if (typeof v === 'number') s = String(v);
  else {
    try {
      s = JSON.stringify(v) ?? String(v);
    } catch {
      s = Array.isArray(v) ? '[...]' : '{...}'; // nested too deeply for JSON.stringify
    }
  }
  if (s.length > 60) s = `${s.slice(0, 57)}...`;
  return escapeControls(s);
}

/**
 * Control characters shown as \uXXXX: a file's text reaches the terminal in messages, and an
 * escape sequence in a cell (ESC [ 2 J ...) must not act on it. C0, DEL, C1 and the bidi overrides.
 */
export function escapeControls(s: string): string {
  return s.replace(/[\u0000-\u001f\u007f-\u009f\u202a-\u202e\u2066-\u2069]/g, (c) => `\\u${c.charCodeAt(0).toString(16).padStart(4, '0')}`);
}

/** "file: row 12, field "lat", value "95": latitude must be ..." */
export function formatProblem(p: Problem): string {
  const where: string[] = [];
  if (p.row !== undefined) where.push(`row ${p.row}`);
  if (p.feature !== undefined) where.push(`feature ${p.feature}`);
  if (p.field !== undefined) where.push(`field "${p.field}"`);
  if (p.value !== undefined) where.push(`value "${p.value}"`);
  if (p.field !== undefined) where[where.length - (p.value !== undefined ? 2 : 1)] = `field "${escapeControls(p.field)}"`;
  const head = where.length > 0 ? `${p.file}: ${where.join(', ')}` : p.file;
  return `${p.severity}: ${head}: ${escapeControls(p.message)}`;
}

/**
 * Collects problems; keeps the first `keep` errors in full (and counts the rest), so that a file
 * with a million bad rows gives a readable report and bounded memory.
 */
export class ProblemLog {
  readonly errors: Problem[] = [];
  readonly warnings: Problem[] = [];
  errorCount = 0;

  constructor(
    readonly file: string,
    private readonly keep = 200,
  ) {}

  error(p: Omit<Problem, 'severity' | 'file'>): void {
    this.errorCount++;
    if (this.errors.length < this.keep) this.errors.push({ severity: 'error', file: this.file, ...p });
  }

  warn(p: Omit<Problem, 'severity' | 'file'>): void {
    this.warnings.push({ severity: 'warning', file: this.file, ...p });
  }

  get ok(): boolean {
    return this.errorCount === 0;
  }

  /** Throws an ImportError when any error was logged. */
  throwIfErrors(): void {
    if (this.errorCount > 0) throw new ImportError(this.file, this.errors, this.errorCount, this.warnings);
  }
}

/**
 * Bad input: the file cannot be imported as it is. Carries every problem found (the first ones
 * in full), each naming the file, row or feature, field and value. Nothing was imported.
 */
export class ImportError extends Error {
  constructor(
    readonly file: string,
    readonly problems: readonly Problem[],
    readonly errorCount = problems.length,
    readonly warnings: readonly Problem[] = [],
  ) {
    const lines = problems.slice(0, 20).map(formatProblem);
    const more = errorCount - Math.min(problems.length, 20);
    if (more > 0) lines.push(`... and ${more} more error${more === 1 ? '' : 's'}`);
    super(`${file}: ${errorCount} error${errorCount === 1 ? '' : 's'}, nothing imported\n${lines.join('\n')}`);
    this.name = 'ImportError';
  }
}

/** Convenience: an ImportError for a problem with the file as a whole. */
export function fileError(file: string, code: string, message: string, extra: Partial<Problem> = {}): ImportError {
  return new ImportError(file, [{ severity: 'error', file, code, message, ...extra }]);
}
