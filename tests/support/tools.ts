// Finds the outside reference tools (cross assembler, emulator, Verilog simulator, EPROM
// file utilities, fuse-map viewer) that tests compare our output against. A test that needs
// a missing tool is skipped on a developer machine but fails under CI (when `CI` is set),
// so a broken install step can never turn the outside checks silently green.
import { execFileSync } from 'node:child_process';

const cache = new Map<string, string | null>();

/** Absolute path of `command` on PATH, or null. */
export function findTool(command: string): string | null {
  if (cache.has(command)) return cache.get(command)!;
  let found: string | null = null;
  try {
    found = execFileSync('sh', ['-c', `command -v ${command}`], { encoding: 'utf8' }).trim() || null;
  } catch {
    found = null;
  }
  cache.set(command, found);
  return found;
}

/** True when the tests run under CI, where every outside tool must be present. */
export const underCi = !!process.env.CI;

/**
 * Returns whether the test needing `commands` can run. Under CI a missing tool throws, which
 * fails the test with a message naming the tool and the Debian package that provides it.
 */
export function haveTools(commands: string[], debianPackage: string): boolean {
  const missing = commands.filter((c) => !findTool(c));
  if (missing.length === 0) return true;
  if (underCi) {
    throw new Error(`outside tool(s) ${missing.join(', ')} missing under CI: install Debian package ${debianPackage}`);
  }
  return false;
}
