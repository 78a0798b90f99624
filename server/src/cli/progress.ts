// A progress line for long CLI work (running a long program, fitting a large store, a
// benchmark): one line on stderr, rewritten in place, shown only when stderr is a terminal so
// piped and captured output stays clean. Updates are throttled to a few per second. The core
// reports progress through plain callbacks; this is the only place that draws it.
import type { Io } from './io';

export interface Progress {
  /** Reports `done` of `total` units (total 0 or undefined: a count with no end known). */
  update(done: number, total?: number, detail?: string): void;
  /** Clears the line (call before printing the result). */
  finish(): void;
}

const quiet: Progress = { update() {}, finish() {} };

/** Minimum time between two redraws, in milliseconds. */
const REDRAW_MS = 200;

export function progressLine(io: Io, label: string, now: () => number = Date.now): Progress {
  if (!io.errIsTty) return quiet;
  let last = -Infinity;
  let shown = false;
  return {
    update(done, total, detail) {
      const t = now();
      if (t - last < REDRAW_MS) return;
      last = t;
      const amount = total ? `${Math.floor((100 * done) / total)}% (${done}/${total})` : `${done}`;
      const text = `${label}: ${amount}${detail ? ` ${detail}` : ''}`;
      io.err(`\r\x1b[K${text}`);
      shown = true;
    },
    finish() {
      if (shown) io.err('\r\x1b[K');
      shown = false;
    },
  };
}
