import { describe, expect, it } from 'vitest';
import { parseEntry, pressKey, type EntryMode, type Key } from './keypad';

const type = (keys: string, mode: EntryMode = 'pH') =>
  [...keys].reduce((t, k) => pressKey(t, (k === '<' ? 'back' : k) as Key, mode), '');

describe('keypad entry', () => {
  it('takes pH to two decimals and ignores a third', () => {
    expect(type('4.756')).toBe('4.75');
    expect(parseEntry('4.75', 'pH')).toEqual({ ok: true, value: 4.75 });
  });
  it('starts a bare decimal point with 0 and allows only one point', () => {
    expect(type('.5.')).toBe('0.5');
  });
  it('drops leading zeros and handles backspace', () => {
    expect(type('07')).toBe('7');
    expect(type('12<3')).toBe('13');
    expect(type('<')).toBe('');
  });
  it('allows a sign only for mV, one decimal', () => {
    expect(type('-123.45', 'mV')).toBe('-123.4');
    expect(type('-5', 'pH')).toBe('5');
    expect(parseEntry('-123.4', 'mV')).toEqual({ ok: true, value: -123.4 });
  });
  it('gives a clear error for empty or out-of-range entries', () => {
    expect(parseEntry('', 'pH')).toMatchObject({ ok: false, error: expect.stringMatching(/Type the pH/) });
    expect(parseEntry('17', 'pH')).toMatchObject({ ok: false, error: expect.stringMatching(/outside -2…16 pH/) });
    expect(parseEntry('150', 'mL')).toMatchObject({ ok: false });
  });
  it('accepts a trailing point as a whole number', () => {
    expect(parseEntry('7.', 'pH')).toEqual({ ok: true, value: 7 });
  });
});
