// Why a file or folder could not be opened, in words (for InputError's problem): "does not exist"
// rather than a raw ENOENT.

export function fileProblem(e: unknown, what: 'file' | 'folder' = 'file'): string {
  const code = (e as NodeJS.ErrnoException).code;
  switch (code) {
    case 'ENOENT': return 'does not exist';
    case 'EACCES': case 'EPERM': return 'cannot be read: permission denied';
    case 'EISDIR': return 'is a folder, not a file';
    case 'ENOTDIR': return what === 'folder' ? 'is not a folder' : 'cannot be reached: a part of its path is a file, not a folder';
    case 'ELOOP': return 'cannot be reached: its links go round in a loop';
    default: return `cannot be read: ${code ?? (e as Error).message}`;
  }
}
