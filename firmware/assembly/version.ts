// What the identify reply names: the product and this firmware's version (board data lives in
// board.ts, generated from the board file).

export const FIRMWARE_VERSION: string = "0.2.0";
export const PRODUCT: string = "henrytick";
