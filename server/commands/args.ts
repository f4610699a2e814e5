// A small argument parser: positionals, `--name value`, `--name=value` and boolean `--flag`.

export interface ParsedArgs {
  readonly positional: string[];
  readonly flags: Record<string, string | true>;
}

/** Options that never take a value. */
const BOOLEAN = new Set(['help', 'demo', 'footpoints', 'read-token', 'with-velocity']);

export function parseArgs(argv: readonly string[]): ParsedArgs {
  const positional: string[] = [];
  const flags: Record<string, string | true> = {};
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i];
    if (a === '-h') { flags.help = true; continue; }
    if (!a.startsWith('--')) { positional.push(a); continue; }
    const eq = a.indexOf('=');
    const name = a.slice(2, eq < 0 ? undefined : eq);
    if (!name) throw new Error(`"${a}" is not an option`);
    if (eq >= 0) flags[name] = a.slice(eq + 1);
    else if (BOOLEAN.has(name)) flags[name] = true;
    else {
      const v = argv[i + 1];
      if (v === undefined || v.startsWith('--')) throw new Error(`option --${name} needs a value`);
      flags[name] = v;
      i++;
    }
  }
  return { positional, flags };
}

/** A numeric option, or `fallback` when absent; throws naming the option when not a number. */
export function numberFlag(args: ParsedArgs, name: string, fallback?: number): number | undefined {
  const v = args.flags[name];
  if (v === undefined) return fallback;
  const n = typeof v === 'string' ? Number(v) : NaN;
  if (!Number.isFinite(n)) throw new Error(`option --${name} needs a number, got "${String(v)}"`);
  return n;
}

/** A string option, or `fallback`. */
export function stringFlag(args: ParsedArgs, name: string, fallback?: string): string | undefined {
  const v = args.flags[name];
  if (v === undefined) return fallback;
  if (v === true) throw new Error(`option --${name} needs a value`);
  return v;
}
