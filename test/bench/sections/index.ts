// The benchmark sections, in the order they run. Each owner adds its own file here.
import { analysisRealSection, analysisSection } from "./analysis.ts";
import { e2eSection } from "./e2e.ts";
import { firmwareSection } from "./firmware.ts";
import { simSection } from "./sim.ts";
import { ptySection } from "./pty.ts";
import { adviceSection } from "./advice.ts";
import { reliabilitySection } from "./reliability.ts";
import { cliSection } from "./cli.ts";
import { honestySection } from "./honesty.ts";
import type { BenchSection } from "./types.ts";

export const sections: BenchSection[] = [firmwareSection, e2eSection, ptySection, simSection, analysisSection, analysisRealSection, adviceSection, reliabilitySection, cliSection, honestySection];
