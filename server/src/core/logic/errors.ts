// Error types of the logic layer: one for bad caller input (a clear message the CLI can show),
// one for broken internal invariants (always a bug in this code, never the user's fault).
// It deliberately holds no recovery policy; callers decide how to report each kind.

/** Bad input from outside the logic layer: a table, a pin map or a file that cannot be used. */
export class LogicInputError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'LogicInputError';
  }
}

/** A broken promise inside this code, such as a minimised cover that disagrees with its table. */
export class LogicInvariantError extends Error {
  constructor(message: string) {
    super(`internal error in the logic minimiser (please report): ${message}`);
    this.name = 'LogicInvariantError';
  }
}

/** Throws a LogicInvariantError when `condition` is false. */
export function invariant(condition: unknown, message: string): asserts condition {
  if (!condition) throw new LogicInvariantError(message);
}
