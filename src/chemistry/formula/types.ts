/** Shared shapes of the formula layer. The implementation lives beside this file. */
export type Phase = 's' | 'l' | 'g' | 'aq';

export interface Species {
  /** The formula as the caller wrote it, trimmed (e.g. "Fe(OH)3(s)", "MnO4^-"). */
  readonly text: string;
  /** Element symbol → atom count, hydrate water included; the electron has {}. */
  readonly composition: Readonly<Record<string, number>>;
  readonly charge: number;
  readonly phase: Phase | null;
}
