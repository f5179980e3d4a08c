/**
 * SQL only through prepared statements with bound parameters (the project file issue and the
 * hardening issue; OWASP's SQL injection prevention cheat sheet, "Option 1: use of prepared
 * statements (with parameterized queries)"): a check over the store's source. Every statement
 * text is a literal without interpolation, so no value can become SQL; values go as `?`
 * parameters. `exec` (which runs unprepared text) is used only for the schema's constant
 * migration steps.
 */
import { readFileSync, readdirSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';

const dir = path.resolve(import.meta.dirname, '../../src/store');
const sources = readdirSync(dir)
  .filter((f) => f.endsWith('.ts'))
  .map((f) => ({ file: f, text: readFileSync(path.join(dir, f), 'utf8') }));

/** The literal argument that follows each `marker(` in text, or null where it is not a literal. */
function literalArguments(text: string, marker: string): (string | null)[] {
  const out: (string | null)[] = [];
  for (let at = text.indexOf(marker); at >= 0; at = text.indexOf(marker, at + 1)) {
    const rest = text.slice(at + marker.length).trimStart();
    const quote = rest[0];
    if (quote !== "'" && quote !== '"' && quote !== '`') {
      out.push(null);
      continue;
    }
    const end = rest.indexOf(quote, 1);
    out.push(end > 0 ? rest.slice(1, end) : null);
  }
  return out;
}

describe('the project store runs SQL only as prepared statements', () => {
  it('prepares only literal statement texts, with no interpolation', () => {
    let statements = 0;
    for (const { file, text } of sources) {
      for (const marker of ['this.sql(', 'db.prepare(', 'd.prepare(']) {
        for (const arg of literalArguments(text, marker)) {
          // The one non-literal: the statement cache's own prepare(text) inside sql().
          if (arg === null && marker === 'db.prepare(' && /this\.db\.prepare\(text\)/.test(text)) continue;
          expect(arg, `${file}: ${marker}...`).not.toBeNull();
          // Interpolation only of the file's own constant SQL fragments (UPPER_CASE consts
          // whose text is itself a literal without interpolation), never of values.
          for (const m of arg!.matchAll(/\$\{([^}]*)\}/g)) {
            const name = m[1]!;
            expect(name, `${file}: ${marker}${arg}`).toMatch(/^[A-Z][A-Z0-9_]*$/);
            const def = new RegExp(`const ${name} =\\s*(\`[^\`]*\`|'[^']*'|"[^"]*")`).exec(text);
            expect(def, `${file}: ${name} must be a constant SQL text`).not.toBeNull();
            expect(def![1], `${file}: ${name}`).not.toContain('${');
          }
          statements++;
        }
      }
    }
    expect(statements).toBeGreaterThan(20);
  });

  it('uses exec only for the constant migration steps of the schema', () => {
    for (const { file, text } of sources) {
      const uses = text.split('.exec(').length - 1;
      if (file === 'schema.ts') expect(text).toMatch(/db\.exec\(step\.sql\)/);
      else expect(uses, file).toBe(0);
    }
  });
});
