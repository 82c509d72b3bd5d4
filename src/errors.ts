/**
 * Typed errors of stratiflow. Every failure a user can cause is one of these, with a stable
 * code, an exit status, and a one-line `format()` that names the file, element and field.
 * The CLI prints `format()` and exits; nothing else escapes as a stack trace.
 */

export type ErrorCode =
  | 'bad-option' // a command-line value is missing, malformed or out of range
  | 'bad-unit' // a quantity string with an unknown unit or one of the wrong dimension
  | 'bad-layout' // the layout file breaks the schema or the topology rules
  | 'bad-file' // a file cannot be read or parsed
  | 'bad-output' // an output file or folder cannot be written
  | 'no-convergence' // the network solve did not settle
  | 'infeasible' // a target cannot be met
  | 'out-of-model'; // the solve reached a state the model cannot represent (a curved interface's arc its strips cannot map)

const EXIT_STATUS: Record<ErrorCode, number> = {
  'bad-option': 2,
  'bad-unit': 2,
  'bad-layout': 2,
  'bad-file': 2,
  'bad-output': 5,
  'no-convergence': 4,
  infeasible: 3,
  'out-of-model': 6,
};

export interface ErrorPlace {
  file?: string;
  element?: string;
  field?: string;
}

export class StratiflowError extends Error {
  readonly code: ErrorCode;
  readonly place: ErrorPlace;

  constructor(code: ErrorCode, message: string, place: ErrorPlace = {}) {
    super(message);
    this.name = 'StratiflowError';
    this.code = code;
    this.place = place;
  }

  get exitStatus(): number {
    return EXIT_STATUS[this.code];
  }

  /** One line: `file: element: field: message`, leaving out the parts that are unknown. */
  format(): string {
    const { file, element, field } = this.place;
    return [file, element, field, this.message].filter((s) => s !== undefined && s !== '').join(': ');
  }
}

/** Several problems found in one pass (the layout loader collects all it can before failing). */
export class StratiflowErrors extends StratiflowError {
  readonly problems: StratiflowError[];

  constructor(problems: StratiflowError[]) {
    super(problems[0]?.code ?? 'bad-layout', problems.slice(0, SHOWN_PROBLEMS).map((p) => p.format()).join('\n'));
    this.problems = problems;
  }

  /** At most SHOWN_PROBLEMS lines, then one that counts the rest: a generated layout with one
   * slip can repeat it on every one of thousands of nodes. */
  override format(): string {
    const shown = this.problems.slice(0, SHOWN_PROBLEMS).map((p) => p.format());
    const rest = this.problems.length - shown.length;
    if (rest > 0) shown.push(`${this.problems[0]!.place.file ?? 'stratiflow'}: … and ${rest} more problems`);
    return shown.join('\n');
  }
}

/** Problems printed of one failed load, at most. */
export const SHOWN_PROBLEMS = 20;

/** Runs `run`; an error it throws without a file is placed in `file` (keeping its element and field). */
export function inFile<T>(file: string, run: () => T): T {
  try {
    return run();
  } catch (error) {
    if (error instanceof StratiflowError && !error.place.file) throw new StratiflowError(error.code, error.message, { ...error.place, file });
    throw error;
  }
}

export function optionError(option: string, message: string): StratiflowError {
  return new StratiflowError('bad-option', message, { field: option });
}
