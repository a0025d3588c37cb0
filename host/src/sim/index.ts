// henrytick/sim: the simulated tester for programs that need more than `openTester({ scenario })`:
// the tester itself (the real firmware behind a simulated board), the board models, the reading a
// correct analysis must give, the pseudo-terminal device, and the demo helpers for sorting and
// winding. A subpath of its own, so the main entry stays the bench application's API.

export { SimTester } from "./sim-tester.ts";
export { referenceBoard, nominalBoard, simulatedBoard, boardWithFixture } from "./board-model.ts";
export type { BoardModel } from "./board-model.ts";
export { boardProfile, boardProfileNames, BoardProfileError, REFERENCE_BOARD } from "./board-profile.ts";
export type { BoardProfile, SimulatedUnit } from "./board-profile.ts";
export { expectedReading } from "./front-end.ts";
export { loadScenario, listScenarios, validateScenario, ScenarioError, DEFAULT_SCENARIO } from "./scenario.ts";
export type { Scenario, PartModel, FixtureModel } from "./scenario.ts";
export { PtyDevice, PtyDeviceError } from "./pty-device.ts";
export type { PtyDeviceOptions } from "./pty-device.ts";
export { SimTray, drawTray, trayPart } from "../workflows/sim-tray.ts";
export { coilOnFormer, formerTurnRange, DEFAULT_FORMER } from "../workflows/sim-coil.ts";
export type { FormerSpec } from "../workflows/sim-coil.ts";
