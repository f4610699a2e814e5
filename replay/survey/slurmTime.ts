// Slurm's time limits (sbatch --time): "MM", "MM:SS", "HH:MM:SS", "D-HH", "D-HH:MM",
// "D-HH:MM:SS" (the forms the sbatch manual lists). Pure.

import { InputError } from '../../core/inputError.js';

/** Seconds of a Slurm time limit. Throws InputError naming `source` and the text. */
export function parseSlurmTime(text: string, source = 'time limit'): number {
  const bad = () => new InputError(source, 'time', `"${text}" is not a Slurm time limit (MM, MM:SS, HH:MM:SS, D-HH, D-HH:MM or D-HH:MM:SS)`);
  const m = /^(?:(\d+)-)?(\d+)(?::(\d+))?(?::(\d+))?$/.exec(text.trim());
  if (!m) throw bad();
  const [, d, a, b, c] = m;
  const n = (s: string | undefined) => (s === undefined ? 0 : Number(s));
  let s: number;
  if (d !== undefined) s = n(d) * 86400 + n(a) * 3600 + n(b) * 60 + n(c); // D-HH[:MM[:SS]]
  else if (c !== undefined) s = n(a) * 3600 + n(b) * 60 + n(c); // HH:MM:SS
  else if (b !== undefined) s = n(a) * 60 + n(b); // MM:SS
  else s = n(a) * 60; // MM
  if (!(s > 0)) throw bad();
  return s;
}

/** A limit of `seconds` as Slurm writes it, D-HH:MM:SS (whole seconds, rounded up). */
export function formatSlurmTime(seconds: number): string {
  const t = Math.ceil(seconds);
  const d = Math.floor(t / 86400), h = Math.floor((t % 86400) / 3600), m = Math.floor((t % 3600) / 60), s = t % 60;
  const hms = [h, m, s].map((x) => String(x).padStart(2, '0')).join(':');
  return d > 0 ? `${d}-${hms}` : hms;
}
