/** The ordo version written into every result. */
export const VERSION = "0.1.0";
