// glibc's allocator for the batch commands (`process`, `survey run`). Their workers are threads
// that make and drop dozens of 2-8 MiB typed arrays per frame; by default glibc gives each thread
// an arena of its own that keeps ~50 MiB of freed memory, and raises its mmap threshold past the
// largest array freed, so the 2 MiB maps are carved from those arenas. One arena and a fixed 2 MiB
// threshold (maps of 2 MiB and more mapped and unmapped by the kernel) take the peak RSS of
// `process` at 512^2 on two workers from 470-485 to 380-430 MiB at about the same CPU
// (docs/speed.md, ninth round; since the tenth round's shared scratch memory, from 424-434 to
// 359-395 MiB). glibc reads these from the environment when a process starts, so they are set by
// whatever starts Node: the launcher's shell line (bin/helicord.js, which must say the same; its
// test checks) and the survey's batch script. Other C libraries ignore them.

export const BATCH_ALLOCATOR: Readonly<Record<string, string>> = { MALLOC_ARENA_MAX: '1', MALLOC_MMAP_THRESHOLD_: '2097152' };

/** A shell line exporting BATCH_ALLOCATOR, keeping values already in the environment. */
export function batchAllocatorExports(): string {
  return `export ${Object.entries(BATCH_ALLOCATOR).map(([k, v]) => `${k}="\${${k}:-${v}}"`).join(' ')}`;
}
