// henrytick wire protocol v1. See docs/protocol.md for the specification.
export * from "./constants.ts";
export * from "./crc16.ts";
export * from "./frame-writer.ts";
export * from "./frame-reader.ts";
export * from "./edge-codec.ts";
