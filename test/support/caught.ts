import { OddsmithError } from "../../src/engine/messages";

/**
 * Run `fn` and return the OddsmithError it throws, so a test can assert the code and the message.
 * Fails the test when nothing is thrown; rethrows anything that is not an OddsmithError (a bug).
 */
export function caught(fn: () => unknown): OddsmithError {
  try {
    fn();
  } catch (e) {
    if (e instanceof OddsmithError) return e;
    throw e;
  }
  throw new Error("expected an OddsmithError, nothing was thrown");
}
