/** One line of the benchmark report: a measured figure against its target. */
export interface BenchFigure {
  name: string;
  value: number;
  unit: string;
  target: number;
  /** `max`: the value must not exceed the target; `min`: it must reach it. */
  kind: 'max' | 'min';
  /** How the figure was measured, printed under it. */
  detail?: string;
}

/** A part of the benchmark; sections run one after another and each reports its figures. */
export interface BenchSection {
  name: string;
  run(context: BenchContext): Promise<BenchFigure[]>;
}

export interface BenchContext {
  /** A scratch folder for generated inputs, removed at the end. */
  workDir: string;
  /** Prints a progress line (stderr). */
  log(message: string): void;
}

export function passes(f: BenchFigure): boolean {
  return f.kind === 'max' ? f.value <= f.target : f.value >= f.target;
}

/** Median of a list of timings (ms). */
export function median(values: readonly number[]): number {
  const s = [...values].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
}
