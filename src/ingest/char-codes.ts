/** ASCII codes of the JSON punctuation and digits the byte-level readers compare against. */
export const QUOTE = 0x22;
export const COMMA = 0x2c;
export const MINUS = 0x2d;
export const DOT = 0x2e;
export const ZERO = 0x30;
export const NINE = 0x39;
export const COLON = 0x3a;
export const OPEN_ARRAY = 0x5b;
export const BACKSLASH = 0x5c;
export const CLOSE_ARRAY = 0x5d;
export const OPEN_OBJECT = 0x7b;
export const CLOSE_OBJECT = 0x7d;
