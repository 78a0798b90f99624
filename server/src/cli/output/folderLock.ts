// The lock that keeps two Phasewright runs (two terminals, a terminal and the editor) from
// writing one output folder at once: a file `.phasewright.lock` created exclusively in the
// folder, holding the owner's process id, host and start time. A second run waits for it a
// bounded time, then refuses with a message naming the owner. A lock left by a process that
// no longer exists on this host (killed mid-build) is taken over; one from another host is
// never guessed about, the message says how to remove it. It does not decide what is
// written under the lock; outputSet.ts does.
import * as path from 'node:path';
import { hostname } from 'node:os';
import { readInputFile } from '../inputFile';
import { OutputError, describeError, removeQuietly, type FileSystemOps } from './safeWriter';

export const lockFileName = '.phasewright.lock';

export interface FolderLock {
  release(): void;
}

interface LockOwner {
  pid: number;
  host: string;
  since: string;
}

const pollMs = 50;
const sleeper = new Int32Array(new SharedArrayBuffer(4));

function sleep(ms: number): void {
  // A synchronous wait that uses no processor time: the writer is synchronous throughout.
  Atomics.wait(sleeper, 0, 0, ms);
}

/** Whether a process with this id exists on this host (a signal 0 probe). */
function processExists(pid: number): boolean {
  try {
    process.kill(pid, 0);
    return true;
  } catch (error) {
    return (error as NodeJS.ErrnoException).code === 'EPERM';
  }
}

function readOwner(fs: FileSystemOps, file: string): LockOwner | undefined {
  // Through the common reader: a FIFO or device planted under the lock's name must not hang us.
  const read = readInputFile(file, { maxBytes: 4096, what: 'lock files', give: 'a file' }, file, fs);
  if (!read.ok) return undefined;
  try {
    const data = JSON.parse(read.bytes.toString('utf8')) as Partial<LockOwner>;
    if (typeof data.pid === 'number' && typeof data.host === 'string' && typeof data.since === 'string') return data as LockOwner;
  } catch {
    // Half-written: treated as held by someone unknown.
  }
  return undefined;
}

/**
 * Takes the lock of `folder` (a real, existing directory), waiting up to `waitMs` for another
 * run to finish. Throws OutputError when it cannot.
 */
export function lockFolder(fs: FileSystemOps, folder: string, displayFolder: string, waitMs: number): FolderLock {
  const file = path.join(folder, lockFileName);
  const me: LockOwner = { pid: process.pid, host: hostname(), since: new Date().toISOString() };
  const deadline = Date.now() + waitMs;
  for (;;) {
    let fd: number | null = null;
    try {
      fd = fs.openSync(file, 'wx', 0o644);
      const text = Buffer.from(`${JSON.stringify(me)}\n`, 'utf8');
      fs.writeSync(fd, text, 0, text.length);
      fs.closeSync(fd);
      fd = null;
      let released = false;
      return {
        release() {
          if (released) return;
          released = true;
          removeQuietly(fs, file);
        },
      };
    } catch (error) {
      if (fd !== null) {
        try {
          fs.closeSync(fd);
        } catch {
          // Removed below.
        }
        removeQuietly(fs, file);
      }
      if ((error as NodeJS.ErrnoException).code !== 'EEXIST') {
        throw new OutputError(displayFolder, `the folder cannot be locked for writing (${describeError(error)})`, 'use');
      }
    }
    const owner = readOwner(fs, file);
    if (owner && owner.host === me.host && owner.pid !== process.pid && !processExists(owner.pid)) {
      // Left by a run that was killed: nobody holds it.
      removeQuietly(fs, file);
      continue;
    }
    if (Date.now() >= deadline) {
      const who = owner ? `process ${owner.pid} on ${owner.host}, since ${owner.since}` : 'another process';
      throw new OutputError(
        displayFolder,
        `another Phasewright run (${who}) is writing into this folder; nothing was written. Try again when it has finished, or choose another output folder ` +
          `(if no such run exists, delete ${path.join(displayFolder, lockFileName)})`,
        'write into',
      );
    }
    sleep(Math.min(pollMs, Math.max(1, deadline - Date.now())));
  }
}
