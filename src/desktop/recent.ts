import { existsSync, mkdirSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { writeFileAtomic } from '../io/atomic.js';

/** The projects opened lately, newest first, kept in a small JSON file in the user's data folder. */
export class RecentProjects {
  constructor(
    private readonly file: string,
    private readonly keep = 8,
  ) {}

  list(): string[] {
    try {
      const data = JSON.parse(readFileSync(this.file, 'utf8')) as unknown;
      if (!Array.isArray(data)) return [];
      return data.filter((f): f is string => typeof f === 'string' && f.length > 0).slice(0, this.keep);
    } catch {
      return [];
    }
  }

  /** The newest project that still exists, or null. */
  latest(): string | null {
    return this.list().find((f) => existsSync(f)) ?? null;
  }

  add(project: string): string[] {
    const file = path.resolve(project);
    const list = [file, ...this.list().filter((f) => f !== file)].slice(0, this.keep);
    mkdirSync(path.dirname(this.file), { recursive: true });
    writeFileAtomic(this.file, `${JSON.stringify(list, null, 2)}\n`);
    return list;
  }
}
