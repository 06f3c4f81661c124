/**
 * The states a queued job's row (a run, later a study) may pass through, as one table per
 * kind: `table[from]` lists the states `from` may become. Stores check every status change
 * against their table, so the rule lives in one place and an illegal change is refused
 * before anything is written.
 */
export type Transitions<S extends string> = { readonly [K in S]: readonly S[] };

export function canTransition<S extends string>(table: Transitions<S>, from: S, to: S): boolean {
  return table[from]?.includes(to) ?? false;
}

/** The states from which `to` may be reached (the guard of a conditional UPDATE). */
export function sourcesOf<S extends string>(table: Transitions<S>, to: S): S[] {
  return (Object.keys(table) as S[]).filter((from) => table[from].includes(to));
}

/** A status change the table does not allow; nothing was written. */
export class IllegalTransition extends Error {
  constructor(
    readonly what: string,
    readonly id: string,
    readonly from: string,
    readonly to: string,
  ) {
    super(`${what} ${id} is ${from}; it cannot become ${to}`);
    this.name = 'IllegalTransition';
  }
}

/**
 * Null instead of IllegalTransition: for workers and the supervisor, a job row that ended
 * meanwhile (cancelled, handed to another attempt) is no error.
 */
export async function unlessEnded<T>(p: Promise<T>): Promise<T | null> {
  try {
    return await p;
  } catch (err) {
    if (err instanceof IllegalTransition) return null;
    throw err;
  }
}
