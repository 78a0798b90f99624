// File names that are not valid UTF-8, carried through JavaScript strings without loss. On
// POSIX a name is any byte string; Node decodes names (and the command line) as UTF-8 and
// turns each invalid byte into U+FFFD, so two different names can become one string and the
// original cannot be opened again. Here every byte of an invalid sequence becomes a lone low
// surrogate U+DC80..U+DCFF instead (the "surrogate escape" other runtimes use), which valid
// UTF-8 can never produce, so the mapping is exact both ways: `fsPath` turns such a string
// back into the bytes the file system needs, `nameFromBytes` makes the string from bytes.
// Strings without escapes pass through unchanged, so ordinary names cost nothing.
//
// It deliberately does not decide how names are shown: a lone surrogate prints as U+FFFD,
// which is what a terminal would show for the byte anyway.
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';

const escapeLow = 0xdc80;
const escapeHigh = 0xdcff;

/** Whether the string holds a surrogate-escaped byte. */
export function hasEscapedBytes(text: string): boolean {
  for (let i = 0; i < text.length; i++) {
    const unit = text.charCodeAt(i);
    if (unit >= escapeLow && unit <= escapeHigh && !isPairedLow(text, i)) return true;
  }
  return false;
}

function isPairedLow(text: string, index: number): boolean {
  const before = index > 0 ? text.charCodeAt(index - 1) : 0;
  return before >= 0xd800 && before <= 0xdbff;
}

/** The path to hand to node:fs: the string itself, or its exact bytes when it carries escapes. */
export function fsPath(path: string): string | Buffer {
  if (!hasEscapedBytes(path)) return path;
  const bytes: number[] = [];
  for (let i = 0; i < path.length; i++) {
    const unit = path.charCodeAt(i);
    if (unit >= escapeLow && unit <= escapeHigh && !isPairedLow(path, i)) {
      bytes.push(unit - 0xdc00);
      continue;
    }
    // Everything else, including proper surrogate pairs, is encoded as UTF-8.
    const codePoint = path.codePointAt(i)!;
    if (codePoint > 0xffff) i++;
    for (const byte of Buffer.from(String.fromCodePoint(codePoint), 'utf8')) bytes.push(byte);
  }
  return Buffer.from(bytes);
}

/** A name from its bytes: valid UTF-8 decoded, every other byte escaped (see the module comment). */
export function nameFromBytes(bytes: Uint8Array): string {
  let out = '';
  let i = 0;
  while (i < bytes.length) {
    const length = validSequenceLength(bytes, i);
    if (length === 0) {
      out += String.fromCharCode(0xdc00 + bytes[i]!);
      i++;
    } else {
      out += Buffer.from(bytes.subarray(i, i + length)).toString('utf8');
      i += length;
    }
  }
  return out;
}

/** Length of the well-formed UTF-8 sequence at `i` (Unicode 15, table 3-7), or 0. */
function validSequenceLength(bytes: Uint8Array, i: number): number {
  const b0 = bytes[i]!;
  if (b0 < 0x80) return 1;
  const cont = (at: number, lo = 0x80, hi = 0xbf) => at < bytes.length && bytes[at]! >= lo && bytes[at]! <= hi;
  if (b0 >= 0xc2 && b0 <= 0xdf) return cont(i + 1) ? 2 : 0;
  if (b0 === 0xe0) return cont(i + 1, 0xa0) && cont(i + 2) ? 3 : 0;
  if ((b0 >= 0xe1 && b0 <= 0xec) || b0 === 0xee || b0 === 0xef) return cont(i + 1) && cont(i + 2) ? 3 : 0;
  if (b0 === 0xed) return cont(i + 1, 0x80, 0x9f) && cont(i + 2) ? 3 : 0;
  if (b0 === 0xf0) return cont(i + 1, 0x90) && cont(i + 2) && cont(i + 3) ? 4 : 0;
  if (b0 >= 0xf1 && b0 <= 0xf3) return cont(i + 1) && cont(i + 2) && cont(i + 3) ? 4 : 0;
  if (b0 === 0xf4) return cont(i + 1, 0x80, 0x8f) && cont(i + 2) && cont(i + 3) ? 4 : 0;
  return 0;
}

/**
 * The command-line arguments after the script, with names that are not UTF-8 kept exact.
 * Node has already decoded `process.argv` lossily; on Linux the original bytes are in
 * /proc/self/cmdline, whose last entries are the same arguments. They are used only when
 * each one decodes to the string Node gave (so nothing else can be mixed in); elsewhere, or
 * when that does not hold, Node's strings are returned unchanged.
 */
export function commandLineArguments(argv: readonly string[] = process.argv): string[] {
  const given = argv.slice(2);
  if (!given.some((arg) => arg.includes('\ufffd'))) return given;
  let raw: Buffer;
  try {
    raw = readFileSync('/proc/self/cmdline');
  } catch {
    return given;
  }
  const entries: Buffer[] = [];
  let start = 0;
  for (let i = 0; i < raw.length; i++) {
    if (raw[i] === 0) {
      entries.push(raw.subarray(start, i));
      start = i + 1;
    }
  }
  if (entries.length < given.length) return given;
  const tail = entries.slice(entries.length - given.length);
  if (tail.some((bytes, i) => bytes.toString('utf8') !== given[i])) return given;
  return tail.map((bytes) => nameFromBytes(bytes));
}

/**
 * The path of a `file:` URI, or undefined for other schemes and malformed URIs. Percent
 * escapes are decoded as bytes, so a name that is not UTF-8 survives (Node's fileURLToPath
 * would decode them as UTF-8 and lose such bytes); Windows paths go through Node's own rules.
 */
export function pathFromFileUri(uri: string): string | undefined {
  let url: URL;
  try {
    url = new URL(uri);
  } catch {
    return undefined;
  }
  if (url.protocol !== 'file:') return undefined;
  try {
    if (process.platform === 'win32' || url.host !== '') return fileURLToPath(url);
    const encoded = url.pathname;
    if (/%2f/i.test(encoded)) return undefined; // an escaped '/' inside a name, as fileURLToPath refuses
    const bytes: number[] = [];
    for (let i = 0; i < encoded.length; i++) {
      if (encoded[i] === '%' && /^[0-9a-f]{2}$/i.test(encoded.slice(i + 1, i + 3))) {
        bytes.push(parseInt(encoded.slice(i + 1, i + 3), 16));
        i += 2;
      } else {
        for (const byte of Buffer.from(encoded[i]!, 'utf8')) bytes.push(byte);
      }
    }
    return nameFromBytes(Uint8Array.from(bytes));
  } catch {
    return undefined;
  }
}
