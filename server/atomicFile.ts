// Durable file writes live in replay/atomicFile.ts (the survey's task results use them too).
export { writeFileAtomic } from '../replay/atomicFile.js';
