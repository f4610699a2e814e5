// The command line: `helicord <command> [options]`. Each command composes core and the server;
// none computes on its own. Every command declares its options (server/commands/args.ts): they are
// read strictly, and `helicord CMD --help` prints them with their defaults.

import { InputError } from '../core/inputError.js';
import type { CommandSpec, ParsedArgs } from './commands/args.js';
import { commandHelp, parseCommandArgs } from './commands/args.js';
import { PROCESS_SPEC, SYNTH_SPEC, processCli, synthCli } from './commands/batch.js';
import { RATE_SPEC, rateCommand } from './commands/rate.js';
import { REPLAY_SPEC, replayCommand } from './commands/replayCommand.js';
import { SERVE_SPEC, serveCommand } from './commands/serveCommand.js';
import { SURVEY_SPEC, SURVEY_STEPS } from './commands/survey.js';
import { nearest } from '../replay/settingsSchema.js';

type Run = (args: ParsedArgs, out: NodeJS.WritableStream, err: NodeJS.WritableStream) => Promise<number>;

/** A command with steps (`survey plan`): each step has its own table of options. */
type Step = { spec: CommandSpec; run: Run };
type Command = Step | { spec: CommandSpec; steps: Readonly<Record<string, Step>> };

const COMMANDS: Record<string, Command> = {
  serve: { spec: SERVE_SPEC, run: serveCommand },
  rate: { spec: RATE_SPEC, run: rateCommand },
  replay: { spec: REPLAY_SPEC, run: replayCommand },
  process: { spec: PROCESS_SPEC, run: processCli },
  synth: { spec: SYNTH_SPEC, run: synthCli },
  survey: { spec: SURVEY_SPEC, steps: SURVEY_STEPS },
};

export const HELP = `helicord — live monitor of magnetic-helicity injection through the photosphere

Usage: helicord <command> [options]
       helicord <command> --help      the command's options, with their defaults

Commands:
${Object.values(COMMANDS).map(({ spec }) => `  ${spec.name.padEnd(9)}${spec.summary}\n${spec.usage.map((u) => `           helicord ${u}`).join('\n')}`).join('\n')}
  help     this text

These are research indicators, not forecasts: for operational decisions use the official
space-weather services.
`;

/** Kinds of thing a file error can be about (InputError fields written in brackets). */
const FILE_FIELDS: Record<string, string> = {
  '(file)': 'the file', '(folder)': 'the folder', '(config file)': 'the config file', '(labels file)': 'the labels file',
};

/** An error as one sentence: a file or folder that cannot be used is named first. */
function sentence(e: unknown): string {
  if (e instanceof InputError && FILE_FIELDS[e.field] !== undefined) return `${FILE_FIELDS[e.field]} ${e.source} ${e.problem}.`;
  return (e as Error).message;
}

export async function main(argv: string[], out: NodeJS.WritableStream = process.stdout, err: NodeJS.WritableStream = process.stderr): Promise<number> {
  let [name, ...rest] = argv;
  if (name === undefined || name === 'help' || name === '--help' || name === '-h') {
    const topic = name === 'help' ? rest[0] : undefined;
    if (topic !== undefined && COMMANDS[topic]) { out.write(commandHelp(COMMANDS[topic].spec)); return 0; }
    out.write(HELP);
    return name === undefined ? 2 : 0;
  }
  const named = COMMANDS[name];
  if (!named) {
    const near = nearest(name, Object.keys(COMMANDS));
    err.write(`helicord: unknown command "${name}"${near ? ` (did you mean ${near}?)` : ''}. Run \`helicord --help\` for the list.\n`);
    return 2;
  }
  let command: Step;
  if ('steps' in named) {
    const step = rest[0];
    const steps = Object.keys(named.steps);
    if (step === undefined || step === '--help' || step === '-h') { (step === undefined ? err : out).write(commandHelp(named.spec)); return step === undefined ? 2 : 0; }
    if (!named.steps[step]) {
      const near = nearest(step, steps);
      err.write(`helicord ${name}: unknown step "${step}"${near ? ` (did you mean ${near}?)` : ''}; the steps are ${steps.join(', ')}\n`);
      return 2;
    }
    command = named.steps[step];
    name = `${name} ${step}`;
    rest = rest.slice(1);
  } else command = named;
  let args: ParsedArgs;
  try {
    args = parseCommandArgs(command.spec, rest);
  } catch (e) {
    err.write(`helicord ${name}: ${(e as Error).message}\n`);
    return 2;
  }
  if (args.boolean('help')) {
    out.write(commandHelp(command.spec));
    return 0;
  }
  try {
    return await command.run(args, out, err);
  } catch (e) {
    err.write(`helicord ${name}: ${sentence(e)}\n`);
    return 1;
  }
}
