import { statSync } from 'node:fs';

/**
 * Smallest capture file an analysis parses on a thread of its own: 32 MB (about
 * 160,000 dual-polarization symbols of CSV at 2.5 samples per symbol). The thread
 * costs some 60 ms of CPU to start and load the loader, which a smaller capture's
 * parse (about 150 ms at 200 MB/s) does not win back on a machine whose cores are busy.
 */
export const HELPER_THREAD_BYTES = 32 << 20;

/**
 * Whether a capture file is large enough for helper threads ({@link HELPER_THREAD_BYTES}).
 * A file that cannot be stat-ed gets none: reading it on this thread reports the problem
 * as it always does.
 * @example const threads = worthHelperThreads(capture.dataPath);
 */
export function worthHelperThreads(path: string): boolean {
  try {
    return statSync(path).size >= HELPER_THREAD_BYTES;
  } catch {
    return false;
  }
}
