// The bench keypad's entry rules, pure: what each key does to the typed text and what the text means.
import { PH_MAX, PH_MIN } from '../../../shared/schemas/run-document';

/** pH from the meter, mV from the meter, or a burette reading in mL. */
export type EntryMode = 'pH' | 'mV' | 'mL';
export type Key = '0' | '1' | '2' | '3' | '4' | '5' | '6' | '7' | '8' | '9' | '.' | '-' | 'back';

export const MODE_RULES: Record<EntryMode, { decimals: number; min: number; max: number; negative: boolean; unit: string }> = {
  // Meters show pH to two decimals; the schema's range bounds what the engine accepts.
  pH: { decimals: 2, min: PH_MIN, max: PH_MAX, negative: false, unit: 'pH' },
  // Meters show mV to one decimal; a glass electrode stays well within ±2000 mV (common practice).
  mV: { decimals: 1, min: -2000, max: 2000, negative: true, unit: 'mV' },
  // Burettes are read to 0.01 mL; 100 mL is the largest common burette (common practice).
  mL: { decimals: 2, min: 0, max: 100, negative: false, unit: 'mL' },
};

const MAX_INT_DIGITS = 4;

/** The text after pressing `key`; a key that would make it invalid leaves it unchanged (no error mid-typing). */
export function pressKey(text: string, key: Key, mode: EntryMode): string {
  const rule = MODE_RULES[mode];
  if (key === 'back') return text.slice(0, -1);
  if (key === '-') {
    if (!rule.negative) return text;
    return text.startsWith('-') ? text.slice(1) : `-${text}`;
  }
  const body = text.startsWith('-') ? text.slice(1) : text;
  const sign = text.startsWith('-') ? '-' : '';
  if (key === '.') {
    if (rule.decimals === 0 || body.includes('.')) return text;
    return `${sign}${body === '' ? '0' : body}.`;
  }
  const [int, frac] = body.split('.');
  if (frac !== undefined) {
    if (frac.length >= rule.decimals) return text;
    return `${text}${key}`;
  }
  if (int === '0') return `${sign}${key}`; // no leading zeros
  if (int.length >= MAX_INT_DIGITS) return text;
  return `${text}${key}`;
}

export type ParsedEntry = { ok: true; value: number } | { ok: false; error: string };

export function parseEntry(text: string, mode: EntryMode): ParsedEntry {
  const rule = MODE_RULES[mode];
  if (text === '' || text === '-' || text === '.') return { ok: false, error: `Type the ${rule.unit} value first.` };
  if (!/^-?\d+(\.\d*)?$/.test(text)) return { ok: false, error: `“${text}” is not a number.` };
  const value = Number(text);
  if (value < rule.min || value > rule.max) {
    return { ok: false, error: `${text} ${rule.unit} is outside ${rule.min}…${rule.max} ${rule.unit}.` };
  }
  return { ok: true, value };
}
