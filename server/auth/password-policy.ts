import { readFileSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { HttpError } from '../http/errors';

const listFile = path.join(path.dirname(fileURLToPath(import.meta.url)), 'common-passwords.txt');

let common: Set<string> | undefined;
function commonPasswords(): Set<string> {
  common ??= new Set(
    readFileSync(listFile, 'utf8')
      .split(/\r?\n/)
      .map((l) => l.trim().toLowerCase())
      .filter((l) => l && !l.startsWith('#')),
  );
  return common;
}

export function isCommonPassword(password: string): boolean {
  return commonPasswords().has(password.normalize('NFKC').trim().toLowerCase());
}

/**
 * Length is checked by the shared zod schema; this adds the blocklist check (NIST SP 800-63B §3.1.1.2),
 * plus refusing the account's own e-mail as its password.
 */
export function assertAcceptablePassword(password: string, email?: string): void {
  const lower = password.trim().toLowerCase();
  if (isCommonPassword(password)) {
    throw weak('That password is one of the most commonly used ones. Choose another.', 'That password is too common. Choose another.');
  }
  if (email && (lower === email.toLowerCase() || lower === email.split('@')[0].toLowerCase())) {
    // Told apart from the common-password case: "too common" would puzzle someone who typed their own address.
    throw weak('That password is your e-mail address. Choose another.', 'Your e-mail address cannot be your password.');
  }
}

const weak = (message: string, fieldMessage: string) =>
  new HttpError(400, 'weak_password', message, [{ path: 'password', message: fieldMessage, code: 'weak_password' }]);
