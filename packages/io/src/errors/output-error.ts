/**
 * An output that cannot be written: a folder where a file should go, a
 * missing or read-only folder, a full disk. Every writer of this package
 * throws this one class (after removing its temporary file), so that the
 * command can exit with code 2 and a message naming the path, instead of a
 * stack trace.
 *
 * The message reads `PATH: WHAT: expected EXPECTED, received RECEIVED`.
 * @example throw new OutputError('lab-sweep/results.csv', 'output file', 'a path in a writable folder', 'ENOSPC (no space left on the device)');
 */
export class OutputError extends Error {
  /** 'OutputError', or the subclass's name. */
  override readonly name: string = 'OutputError';
  /** The path that could not be written. */
  readonly path: string;
  /** What was being written: an output file, an output folder, the sweep's journal… */
  readonly what: string;
  /** What the path should have been, in words. */
  readonly expected: string;
  /** What was found instead, or the system's reason. */
  readonly received: string;

  constructor(path: string, what: string, expected: string, received: string) {
    super(`${path}: ${what}: expected ${expected}, received ${received}`);
    this.path = path;
    this.what = what;
    this.expected = expected;
    this.received = received;
  }
}

/**
 * Thrown when an output would replace a file that must be kept.
 * @example try { writeJsonAtomic('out.json', {}); } catch (e) { if (e instanceof OutputExistsError) console.error(e.path); }
 */
export class OutputExistsError extends OutputError {
  /** Always 'OutputExistsError'. */
  override readonly name = 'OutputExistsError';
  constructor(path: string) {
    super(path, 'output file', 'a path where no file exists', 'an existing file');
    this.message = `${path}: already exists; refusing to overwrite it (choose another output folder or remove the file)`;
  }
}
