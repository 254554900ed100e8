// Halfmark command line: `npm run -s cli -- COMMAND FILE.json` (FILE may be `-` for standard input).
// Prints exactly one JSON object on stdout; every problem goes to stderr with a non-zero exit code.
import { readFileSync } from 'node:fs';
import { commands } from './commands/index';

const EXIT_USAGE = 64; // sysexits: command line usage error
const EXIT_DATA = 65; // sysexits: input data error
const EXIT_INTERNAL = 70; // sysexits: internal software error

function usage(): string {
  return `usage: npm run -s cli -- <${Object.keys(commands).join('|')}> FILE.json   (FILE may be - for standard input)`;
}

function fail(code: number, message: string): never {
  process.stderr.write(message.endsWith('\n') ? message : `${message}\n`);
  process.exit(code);
}

function main(argv: string[]): void {
  const [name, file, ...rest] = argv;
  if (!name || name === '--help' || name === '-h') fail(name ? 0 : EXIT_USAGE, usage());
  const handler = Object.prototype.hasOwnProperty.call(commands, name) ? commands[name] : undefined;
  if (!handler) fail(EXIT_USAGE, `unknown command "${name}"\n${usage()}`);
  if (!file || rest.length) fail(EXIT_USAGE, `${name}: give exactly one input file\n${usage()}`);
  let text: string;
  try {
    text = readFileSync(file === '-' ? 0 : file, 'utf8');
  } catch (e) {
    fail(EXIT_DATA, `${name}: cannot read ${file}: ${(e as Error).message}`);
  }
  let input: unknown;
  try {
    input = JSON.parse(text);
  } catch (e) {
    fail(EXIT_DATA, `${name}: ${file} is not valid JSON: ${(e as Error).message}`);
  }
  let out: unknown;
  try {
    out = handler(input);
  } catch (e) {
    const issues = (e as { issues?: unknown }).issues;
    if (Array.isArray(issues) && issues.every((i) => typeof i === 'string')) {
      fail(EXIT_DATA, `${name}: invalid input in ${file}:\n${issues.map((i) => `  - ${i}`).join('\n')}`);
    }
    fail(EXIT_INTERNAL, `${name}: failed: ${(e as Error).stack ?? String(e)}`);
  }
  process.stdout.write(`${JSON.stringify(out)}\n`);
}

main(process.argv.slice(2));
