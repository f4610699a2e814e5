// Region names become folder names: only [A-Za-z0-9_-]{1,64} is accepted (docs/api.md), so a name
// from a request can never climb out of the data folder.
import { InputError } from '../core/inputError.js';

const NAME = /^[A-Za-z0-9_-]{1,64}$/;

export function checkRegionName(name: unknown, source = 'request'): string {
  if (typeof name !== 'string' || !NAME.test(name)) {
    throw new InputError(source, 'region', `${JSON.stringify(name)} is not a region name: 1 to 64 of A-Z a-z 0-9 _ -`);
  }
  return name;
}
