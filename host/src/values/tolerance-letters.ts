// IEC 60062 tolerance letters, (secondary source, value from memory of the standard's table): the letter
// that follows a value code (`4u7J`) and stands for a symmetric relative tolerance.

export const TOLERANCE_LETTERS: Readonly<Record<string, number>> = {
  B: 0.001, C: 0.0025, D: 0.005, F: 0.01, G: 0.02, J: 0.05, K: 0.1, M: 0.2,
};
