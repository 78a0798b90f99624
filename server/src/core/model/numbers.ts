// Reading numbers and bit patterns as the notation writes them. Returns undefined for
// malformed text so the caller can report it at the literal's span.

/** Decimal, `0x` hexadecimal or `0b` binary; underscores may group digits. */
export function parseNumber(text: string): number | undefined {
  const clean = text.replace(/_/g, '');
  let value: number;
  if (/^0x[0-9a-f]+$/i.test(clean)) value = parseInt(clean.slice(2), 16);
  else if (/^0b[01]+$/i.test(clean)) value = parseInt(clean.slice(2), 2);
  else if (/^[0-9]+$/.test(clean)) value = parseInt(clean, 10);
  else return undefined;
  return Number.isSafeInteger(value) ? value : undefined;
}

/** A bit pattern of 0, 1 and `-` (any), most significant bit first. */
export function parseBits(text: string): string | undefined {
  return /^[01-]+$/.test(text) ? text : undefined;
}

export function toBinary(value: number, width: number): string {
  return (value >>> 0).toString(2).padStart(width, '0').slice(-width);
}

export function toHex(value: number, digits: number): string {
  return (value >>> 0).toString(16).toUpperCase().padStart(digits, '0');
}

/** True if `value` (an integer) matches a pattern of `bits.length` bits. */
export function matchesBits(bits: string, value: number): boolean {
  const width = bits.length;
  for (let i = 0; i < width; i++) {
    const ch = bits.charCodeAt(width - 1 - i);
    if (ch === 45) continue;
    if (((value >>> i) & 1) !== ch - 48) return false;
  }
  return true;
}
