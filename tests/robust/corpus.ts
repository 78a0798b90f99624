// The fuzz corpus shared by tests/robust/fuzz.test.ts and bench/robust.bench.ts: token soup
// built from the notation's own words and punctuation, and the invariants every analysis must
// keep whatever the input (spans in bounds, messages and codes present, lossless tokens).
import fc from 'fast-check';
import { analyse } from '../../server/src/core/analysis';

/** Checks the invariants every analysis must keep, whatever the input. */
export function checkInvariants(text: string): void {
  const a = analyse(text);
  for (const d of a.diagnostics) {
    if (!(d.span.start >= 0 && d.span.end <= text.length && d.span.start <= d.span.end)) {
      throw new Error(`diagnostic span out of bounds: ${JSON.stringify(d)}`);
    }
    for (const r of d.related ?? []) if (r.span.end > text.length) throw new Error(`related span out of bounds: ${JSON.stringify(r)}`);
    if (!d.message || !d.code) throw new Error('diagnostic without message or code');
  }
  if (a.parse.tokens.map((t) => t.text).join('') !== text) throw new Error('tokens do not give back the text');
}

const words = ['machine', 'bus', 'part', 'strobe', 'field', 'store', 'word', 'address', 'map', 'phase', 'class', 'use', 'if', 'else', 'at', 'as', 'x', 'keeper', 'active', 'high', 'low', 'enable', 'clock', 'count', 'read', 'write', 'end', 'trap', 'regfile', 'alu', 'compare', 'memory', 'step', 'opcode', 'funct3', 'f7b5', 'ir', 'taken', 'a.oe', 'b', 'OP-IMM', 'isa', 'rv32i'];
const punct = [':', ',', '=', '{', '}', '(', ')', '[', ']', '&', '!', '+', '..', '->', '-', '"text"', '"open', '#c', '\n', '\r\n', '\r', ' ', '  ', '\t'];
const tokenArb = fc.oneof(
  fc.constantFrom(...words),
  fc.constantFrom(...punct),
  fc.integer({ min: 0, max: 99999 }).map(String),
  fc.constantFrom('0x1F', '0b101', '1-0', '---', '1.8', '0..7', '99999999999999999999999'),
);
export const soupArb = fc.array(tokenArb, { maxLength: 60 }).map((t) => t.join(' '));

