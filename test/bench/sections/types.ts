export type BenchFigures = Record<string, number | string | null>;

export interface BenchSection {
  name: string;
  run(progress: (message: string) => void): Promise<{ figures: BenchFigures; notes?: Record<string, string> }>;
}
