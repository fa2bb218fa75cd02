/** An error meant for the person at the terminal: one line, an exit code, no stack trace unless --debug. */
export class CommandError extends Error {
  /** The process exit code the command ends with. */
  readonly exitCode: number;

  constructor(message: string, exitCode = 1) {
    super(message);
    this.name = 'CommandError';
    this.exitCode = exitCode;
  }
}
