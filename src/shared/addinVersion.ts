/**
 * The add-in's version, written into every model description (src/engine/portable/). It follows
 * package.json's "version" (a unit test keeps the two in step).
 */
export const ADDIN_VERSION = "0.1.0";
