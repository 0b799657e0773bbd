/** The namespace Excel shows before every Oddsmith function (=ODDS.FIT). The manifest's
 * Functions.Namespace string must equal it; test/unit/manifest.test.ts checks that. */
export const NAMESPACE = "ODDS";
