// Breakpoint conditions (core/debug/condition.ts): what they parse to, what they refuse and with
// which words, and how they compare. Values compare as unsigned 32-bit numbers, so `-1` is
// 0xffffffff (two's complement, common practice, no source); `&&` binds tighter than `||`
// (as in C, common practice, no source).
import { describe, expect, it } from 'vitest';
import { conditionHolds, parseCondition, type Condition } from '../../server/src/core/debug/condition';

function parsed(text: string): { condition: Condition; names: string[] } {
  const result = parseCondition(text);
  if (!result.ok) throw new Error(result.error);
  return result;
}

function holds(text: string, values: Record<string, number | undefined>): boolean {
  return conditionHolds(parsed(text).condition, (name) => values[name]);
}

describe('breakpoint conditions', () => {
  it('parse comparisons, and a bare operand as "is not 0"', () => {
    expect(parseCondition('a0 == 15')).toEqual({ ok: true, condition: [[{ left: { kind: 'name', name: 'a0' }, op: '==', right: { kind: 'number', value: 15 } }]], names: ['a0'] });
    expect(parsed('taken').condition).toEqual([[{ left: { kind: 'name', name: 'taken' }, op: '!=', right: { kind: 'number', value: 0 } }]]);
    expect(parsed('x.rs1 >= pc').names).toEqual(['x.rs1', 'pc']);
    for (const op of ['==', '!=', '<', '<=', '>', '>='] as const) expect(parsed(`step ${op} 2`).condition[0][0].op).toBe(op);
  });

  it('bind && tighter than ||', () => {
    const { condition } = parsed('a || b && c');
    expect(condition.map((conjunction) => conjunction.map((c) => (c.left as { name: string }).name))).toEqual([['a'], ['b', 'c']]);
    expect(holds('a || b && c', { a: 0, b: 1, c: 0 })).toBe(false);
    expect(holds('a || b && c', { a: 1, b: 0, c: 0 })).toBe(true);
    expect(holds('a || b && c', { a: 0, b: 1, c: 1 })).toBe(true);
  });

  it('read decimal, hex, binary, underscores and negative numbers as unsigned 32-bit values', () => {
    const value = (text: string) => (parsed(`x == ${text}`).condition[0][0].right as { value: number }).value;
    expect(value('0x10')).toBe(16);
    expect(value('0xFFFF_FFFF')).toBe(0xffffffff);
    expect(value('0b101')).toBe(5);
    expect(value('1_000')).toBe(1000);
    expect(value('4294967295')).toBe(0xffffffff);
    expect(value('-1')).toBe(0xffffffff);
    expect(value('-2147483648')).toBe(0x80000000);
  });

  it('refuse what they cannot read, saying what', () => {
    const error = (text: string) => {
      const result = parseCondition(text);
      return result.ok ? 'accepted' : result.error;
    };
    expect(error('')).toBe('the condition is empty');
    expect(error('   ')).toBe('the condition is empty');
    expect(error('a0 ==')).toBe('a value is missing at the end');
    expect(error('a0 == ==')).toBe('expected a name or a number, found "=="');
    expect(error('== 5')).toBe('expected a name or a number, found "=="');
    expect(error('a0 == 4294967296')).toBe('"4294967296" is not a 32-bit number');
    expect(error('a0 == 0x100000000')).toBe('"0x100000000" is not a 32-bit number');
    expect(error('a0 = 5')).toBe('expected &&, || or the end, found "="');
    expect(error('a0 == 5 &&')).toBe('a value is missing at the end');
    expect(error('a0 == 5 and a1 == 2')).toBe('expected &&, || or the end, found "and"');
    expect(error('a0 == 5 $')).toBe('expected &&, || or the end, found "$"');
    expect(error('a0 == 5 || (a1 == 2)')).toBe('expected a name or a number, found "("');
  });

  it('compare unsigned: a negative register value is above every positive one', () => {
    expect(holds('a0 > 5', { a0: 0x80000000 })).toBe(true);
    expect(holds('a0 < 0', { a0: 0 })).toBe(false);
    expect(holds('a0 == -1', { a0: 0xffffffff })).toBe(true);
    expect(holds('a0 <= a1', { a0: 7, a1: 7 })).toBe(true);
    expect(holds('a0 != a1', { a0: 7, a1: 7 })).toBe(false);
  });

  it('let a value that is not known now (a floating bus) satisfy no comparison', () => {
    expect(holds('result == 0', { result: undefined })).toBe(false);
    expect(holds('result != 0', { result: undefined })).toBe(false);
    expect(holds('result', { result: undefined })).toBe(false);
    expect(holds('result == 0 || step == 2', { result: undefined, step: 2 })).toBe(true);
    expect(holds('result == 0 && step == 2', { result: undefined, step: 2 })).toBe(false);
  });
});
