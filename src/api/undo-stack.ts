import type { PlanEdit } from './app-types.js';

/** One step of a plan's edit history: the edit made, and the edit that takes it back. */
export interface EditStep {
  readonly edit: PlanEdit;
  readonly inverse: PlanEdit;
}

/** Undo and redo of manual edits, per plan (by name), for one window's session. */
export class UndoStacks {
  private readonly stacks = new Map<string, { undo: EditStep[]; redo: EditStep[] }>();

  private of(plan: string): { undo: EditStep[]; redo: EditStep[] } {
    let s = this.stacks.get(plan);
    if (!s) this.stacks.set(plan, (s = { undo: [], redo: [] }));
    return s;
  }

  /** A new edit: it can be undone, and nothing undone before can be redone any more. */
  did(plan: string, step: EditStep): void {
    const s = this.of(plan);
    s.undo.push(step);
    s.redo.length = 0;
  }

  popUndo(plan: string): EditStep | undefined {
    return this.stacks.get(plan)?.undo.pop();
  }

  popRedo(plan: string): EditStep | undefined {
    return this.stacks.get(plan)?.redo.pop();
  }

  undone(plan: string, step: EditStep): void {
    this.of(plan).redo.push(step);
  }

  redone(plan: string, step: EditStep): void {
    this.of(plan).undo.push(step);
  }

  canUndo(plan: string): boolean {
    return (this.stacks.get(plan)?.undo.length ?? 0) > 0;
  }

  canRedo(plan: string): boolean {
    return (this.stacks.get(plan)?.redo.length ?? 0) > 0;
  }

  rename(from: string, to: string): void {
    const s = this.stacks.get(from);
    this.stacks.delete(from);
    if (s) this.stacks.set(to, s);
  }

  clear(): void {
    this.stacks.clear();
  }
}
