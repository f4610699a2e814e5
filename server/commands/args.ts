// The command line's options. Each command declares its options once (kind, default, help), node's
// util.parseArgs reads them strictly, and the command's `--help` is printed from the same table:
// - an unknown option, a value given to a switch, a missing value, an option given twice, a
//   number that is not one or is out of range, a word outside an option's choices: each is an
//   error that names the option (and the nearest known option for a misspelling);
// - the getters return the option's value, or its default, already checked.
import { parseArgs as nodeParseArgs } from 'node:util';
import { nearest } from '../../replay/settingsSchema.js';

export interface OptionSpec {
  /** `list` is a string option that may be repeated (or given as a comma list). */
  readonly kind: 'string' | 'number' | 'integer' | 'boolean' | 'list';
  /** Placeholder of the value in the help (N, DIR, FILE ...). */
  readonly value?: string;
  /** The value when the option is absent (also printed in the help). */
  readonly default?: string | number;
  /** The default in words when it is not a single value ("every core"). */
  readonly defaultText?: string;
  /** Bounds of a number option (inclusive). */
  readonly min?: number;
  readonly max?: number;
  /** Exclusive lower bound of a number option. */
  readonly above?: number;
  /** The words a string option accepts. */
  readonly choices?: readonly string[];
  readonly help: string;
}

export interface CommandSpec {
  readonly name: string;
  /** Usage lines, each after `helicord `. */
  readonly usage: readonly string[];
  /** One line for the list of commands. */
  readonly summary: string;
  /** What the command does, a paragraph (wrapped as written). */
  readonly description: string;
  /** How many file or folder names it takes, and what they are (for the help and the errors). */
  readonly positionals: { readonly min: number; readonly max: number; readonly what: string };
  readonly options: Readonly<Record<string, OptionSpec>>;
}

/** The options every command takes. */
const HELP_OPTION: OptionSpec = { kind: 'boolean', help: 'print this command\'s options and stop' };

/** A command line read against its command's table. */
export class ParsedArgs {
  readonly spec: CommandSpec;
  readonly positional: readonly string[];
  private readonly values: Readonly<Record<string, string | boolean | string[] | undefined>>;

  constructor(spec: CommandSpec, positional: readonly string[], values: Record<string, string | boolean | string[] | undefined>) {
    this.spec = spec;
    this.positional = positional;
    this.values = values;
  }

  /** True when the option was given on the command line. */
  given(name: string): boolean {
    this.option(name);
    return this.values[name] !== undefined;
  }

  private option(name: string): OptionSpec {
    const o = name === 'help' ? HELP_OPTION : this.spec.options[name];
    if (!o) throw new Error(`${this.spec.name} has no option --${name} (a mistake in the command's table)`);
    return o;
  }

  boolean(name: string): boolean {
    this.option(name);
    return this.values[name] === true;
  }

  string(name: string): string | undefined {
    const o = this.option(name);
    const v = this.values[name];
    return typeof v === 'string' ? v : typeof o.default === 'string' ? o.default : undefined;
  }

  number(name: string): number | undefined {
    const o = this.option(name);
    const v = this.values[name];
    if (typeof v === 'string') return Number(v);
    return typeof o.default === 'number' ? o.default : undefined;
  }

  /** Every value of a repeatable option, comma lists split, empty pieces dropped. */
  list(name: string): string[] {
    this.option(name);
    const v = this.values[name];
    const all = Array.isArray(v) ? v : typeof v === 'string' ? [v] : [];
    return all.flatMap((s) => s.split(',')).map((s) => s.trim()).filter(Boolean);
  }
}

function checkValue(spec: CommandSpec, name: string, o: OptionSpec, v: string): void {
  const where = `option --${name}`;
  if (o.kind === 'number' || o.kind === 'integer') {
    const n = v.trim() === '' ? NaN : Number(v);
    if (!Number.isFinite(n)) throw new Error(`${where} needs a number, got "${v}"`);
    if (o.kind === 'integer' && !Number.isInteger(n)) throw new Error(`${where} needs a whole number, got ${v}`);
    if (o.min !== undefined && n < o.min) throw new Error(`${where} must be ${o.min} or more, got ${v}`);
    if (o.above !== undefined && !(n > o.above)) throw new Error(`${where} must be more than ${o.above}, got ${v}`);
    if (o.max !== undefined && n > o.max) throw new Error(`${where} must be ${o.max} or less, got ${v}`);
  }
  if (o.choices && (o.kind === 'string' || o.kind === 'list')) {
    for (const piece of o.kind === 'list' ? v.split(',').map((s) => s.trim()).filter(Boolean) : [v]) {
      if (!o.choices.includes(piece)) {
        const near = nearest(piece, o.choices);
        throw new Error(`${where} takes ${o.choices.join(', ')}; got "${piece}"${near ? ` (did you mean ${near}?)` : ''}`);
      }
    }
  }
  void spec;
}

/**
 * Reads `argv` against the command's table. Throws an Error whose message names the option or
 * argument at fault (and how to list the options).
 */
export function parseCommandArgs(spec: CommandSpec, argv: readonly string[]): ParsedArgs {
  const options: Record<string, { type: 'string' | 'boolean'; multiple?: boolean; short?: string }> = {
    help: { type: 'boolean', short: 'h' },
  };
  for (const [name, o] of Object.entries(spec.options)) {
    options[name] = { type: o.kind === 'boolean' ? 'boolean' : 'string', ...(o.kind === 'list' && { multiple: true }) };
  }
  const seeHelp = `\`helicord ${spec.name} --help\` lists its options`;
  let parsed: ReturnType<typeof nodeParseArgs>;
  try {
    parsed = nodeParseArgs({ args: [...argv], options, strict: true, allowPositionals: spec.positionals.max > 0, tokens: true });
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    const msg = (e as Error).message;
    if (code === 'ERR_PARSE_ARGS_UNKNOWN_OPTION') {
      const raw = /Unknown option '([^']+)'/.exec(msg)?.[1] ?? '?';
      const name = raw.replace(/^-+/, '').replace(/=.*$/, '');
      const near = nearest(name, Object.keys(spec.options));
      throw new Error(`unknown option ${raw}${near ? ` (did you mean --${near}?)` : ''}; ${seeHelp}`);
    }
    if (code === 'ERR_PARSE_ARGS_UNEXPECTED_POSITIONAL') {
      const arg = /argument '([^']*)'/.exec(msg)?.[1] ?? '?';
      throw new Error(`takes no file or folder names, got "${arg}"; ${seeHelp}`);
    }
    if (code === 'ERR_PARSE_ARGS_INVALID_OPTION_VALUE') {
      const name = /'--?([A-Za-z0-9-]+)/.exec(msg)?.[1] ?? '?';
      if (/does not take an argument/.test(msg)) throw new Error(`option --${name} is a switch and takes no value`);
      if (/ambiguous/.test(msg)) throw new Error(`option --${name} needs a value (to give one that starts with a dash, write --${name}=-VALUE)`);
      throw new Error(`option --${name} needs a value`);
    }
    throw e;
  }
  // An option given twice (other than a repeatable one) is an error, not "the last one wins".
  const seen = new Set<string>();
  for (const t of parsed.tokens ?? []) {
    if (t.kind !== 'option') continue;
    const o = t.name === 'help' ? HELP_OPTION : spec.options[t.name];
    if (o.kind === 'list') continue;
    if (seen.has(t.name)) throw new Error(`option --${t.name} is given twice`);
    seen.add(t.name);
  }
  const values = parsed.values as Record<string, string | boolean | string[] | undefined>;
  const args = new ParsedArgs(spec, parsed.positionals, values);
  if (values.help === true) return args;
  for (const [name, o] of Object.entries(spec.options)) {
    const v = values[name];
    if (v === undefined) continue;
    for (const one of Array.isArray(v) ? v : [v]) if (typeof one === 'string') checkValue(spec, name, o, one);
  }
  const n = parsed.positionals.length;
  const { min, max, what } = spec.positionals;
  if (n < min) throw new Error(`needs ${what}; ${seeHelp}`);
  if (n > max) throw new Error(max === 0 ? `takes no file or folder names, got "${parsed.positionals[0]}"; ${seeHelp}` : `takes at most ${max} ${max === 1 ? 'name' : 'names'} (${what}), got ${n}: ${parsed.positionals.join(' ')}`);
  return args;
}

function wrap(text: string, indent: string, width = 100): string {
  const out: string[] = [];
  for (const para of text.split('\n')) {
    let line = '';
    for (const word of para.split(/\s+/).filter(Boolean)) {
      if (line && indent.length + line.length + 1 + word.length > width) { out.push(indent + line); line = word; }
      else line = line ? `${line} ${word}` : word;
    }
    out.push(indent + line);
  }
  return out.join('\n');
}

function defaultOf(o: OptionSpec): string | undefined {
  if (o.defaultText !== undefined) return o.defaultText;
  if (o.default !== undefined) return String(o.default);
  return undefined;
}

/** The help of one command: usage, what it does, every option with its default. */
export function commandHelp(spec: CommandSpec): string {
  const lines = [`Usage: ${spec.usage.map((u, i) => (i === 0 ? '' : '       ') + `helicord ${u}`).join('\n')}`, '', wrap(spec.description, ''), '', 'Options:'];
  const entries: [string, OptionSpec][] = [...Object.entries(spec.options), ['help', HELP_OPTION]];
  for (const [name, o] of entries) {
    const head = `  --${name}${o.kind === 'boolean' ? '' : ` ${o.value ?? (o.kind === 'number' || o.kind === 'integer' ? 'N' : 'VALUE')}`}${name === 'help' ? ', -h' : ''}`;
    const def = defaultOf(o);
    const extra = [
      o.choices ? `one of ${o.choices.join(', ')}` : undefined,
      o.kind === 'list' ? 'may be repeated or given as a comma list' : undefined,
      def !== undefined ? `default ${def}` : undefined,
    ].filter(Boolean).join('; ');
    lines.push(head, wrap(o.help + (extra ? ` (${extra})` : ''), '        '));
  }
  return lines.join('\n') + '\n';
}
