// One error type for bad input, so that every refusal names where (source), what (field) and why.

export class InputError extends Error {
  readonly source: string;
  readonly field: string;
  readonly problem: string;

  constructor(source: string, field: string, problem: string) {
    super(`${source}: ${field}: ${problem}`);
    this.name = 'InputError';
    this.source = source;
    this.field = field;
    this.problem = problem;
  }
}
