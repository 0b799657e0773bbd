import {
  describeOptions,
  expectedText,
  FIT_OPTIONS,
  OPT_BASELINE,
  OPT_FIRTH,
  OPT_HEADERS,
  OPT_INTERVAL,
  OPT_LEVEL,
  OPT_PENALTY,
  OPT_POOL,
  parseBaselines,
  parseOptions,
} from "../../../src/shared/options";
import { caught } from "../../support/caught";


const SCHEMA = [OPT_PENALTY, OPT_LEVEL, OPT_FIRTH, OPT_INTERVAL, OPT_BASELINE, OPT_POOL] as const;
const parse = (raw: unknown) => parseOptions("ODDS.FIT", SCHEMA, raw);

describe("parseOptions: forms of the argument", () => {
  test("omitted (null), undefined and blank text give every default", () => {
    const defaults = { penalty: 0, level: 0.95, firth: false, interval: "wald", baseline: [], pool: 0 };
    expect(parse(null)).toEqual(defaults);
    expect(parse(undefined)).toEqual(defaults);
    expect(parse("  ")).toEqual(defaults);
  });

  test("text with ; or , separators, any case and spaces around names, = and values", () => {
    const o = parse(" Penalty = 0.1 ;LEVEL=0.9, interval = Profile ;");
    expect(o.penalty).toBe(0.1);
    expect(o.level).toBe(0.9);
    expect(o.interval).toBe("profile");
  });

  test("a boolean option named alone means true", () => {
    expect(parse("firth").firth).toBe(true);
    expect(parse("FIRTH; penalty=1").firth).toBe(true);
  });

  test("a two-column range of names and values, with blank rows ignored", () => {
    const o = parse([
      ["penalty", 0.5],
      [null, null],
      ["firth", true],
      ["Level", "0.8"],
    ]);
    expect(o).toMatchObject({ penalty: 0.5, firth: true, level: 0.8 });
  });

  test("a one-cell range holding options text is read as text", () => {
    expect(parse([["penalty=2; firth=yes"]])).toMatchObject({ penalty: 2, firth: true });
  });

  test("a one-column range of name=value cells is read cell by cell", () => {
    expect(parse([["penalty=2"], [""], ["level=0.5"]])).toMatchObject({ penalty: 2, level: 0.5 });
  });

  test("a repeatable option collects its values in order", () => {
    expect(parse("baseline=region:North; baseline=size:Small").baseline).toEqual(["region:North", "size:Small"]);
  });
});

describe("parseOptions: values", () => {
  test.each([
    ["true", true],
    ["FALSE", false],
    ["yes", true],
    ["No", false],
    ["1", true],
    ["0", false],
  ])("boolean text %p is %p", (text, value) => {
    expect(parse(`firth=${text}`).firth).toBe(value);
  });

  test("booleans and numbers from a range cell are accepted for a boolean option", () => {
    expect(parse([["firth", 1]]).firth).toBe(true);
    expect(parse([["firth", false]]).firth).toBe(false);
  });

  test("numbers use the locale-free rule of the range parser", () => {
    expect(parse("penalty=1e-3").penalty).toBe(0.001);
    expect(parse("penalty=.5").penalty).toBe(0.5);
  });
});

describe("parseOptions: problems", () => {
  test("an unknown name is UNKNOWN_OPTION listing the valid names", () => {
    const e = caught(() => parse("lambda=0.1"));
    expect(e.code).toBe("UNKNOWN_OPTION");
    expect(e.message).toBe(
      '"lambda" is not an option of ODDS.FIT. Valid options: penalty, level, firth, interval, baseline, pool.',
    );
  });

  test("a number out of bounds is BAD_OPTION_VALUE saying the valid range", () => {
    const e = caught(() => parse("level=95"));
    expect(e.code).toBe("BAD_OPTION_VALUE");
    expect(e.message).toBe("The option level cannot be \"95\". Enter a number that is above 0 and below 1.");
  });

  test("a negative penalty is BAD_OPTION_VALUE", () => {
    expect(caught(() => parse("penalty=-1")).message).toBe(
      'The option penalty cannot be "-1". Enter a number that is at least 0.',
    );
  });

  test("a number with a decimal comma is not read as a number, and the message says the comma separates options", () => {
    const e = caught(() => parse("level=0,9"));
    expect(e.code).toBe("OPTION_DECIMAL_COMMA");
    expect(e.message).toBe(
      'The options text "level=0,9" has "9" after a comma. Commas and semicolons separate options, so write decimals with a point (e.g. "level=0.9").',
    );
  });

  test("text where a number is needed is BAD_OPTION_VALUE", () => {
    expect(caught(() => parse("penalty=high")).message).toBe(
      'The option penalty cannot be "high". Enter a number that is at least 0.',
    );
  });

  test("a fraction for a whole-number option is BAD_OPTION_VALUE", () => {
    expect(caught(() => parse("pool=2.5")).message).toBe(
      'The option pool cannot be "2.5". Enter a whole number that is at least 0.',
    );
  });

  test("a bad boolean is BAD_OPTION_VALUE listing the accepted words", () => {
    expect(caught(() => parse("firth=maybe")).message).toBe(
      'The option firth cannot be "maybe". Use TRUE or FALSE (yes/no and 1/0 also work).',
    );
  });

  test("a bad choice is BAD_OPTION_VALUE listing the choices", () => {
    expect(caught(() => parse("interval=exact")).message).toBe(
      'The option interval cannot be "exact". Choose one of: wald or profile.',
    );
  });

  test("an empty value is BAD_OPTION_VALUE", () => {
    expect(caught(() => parse("penalty=")).message).toBe(
      'The option penalty cannot be "". Enter a number that is at least 0.',
    );
  });

  test("a piece without = that is not a boolean option is OPTION_SYNTAX", () => {
    const e = caught(() => parse("penalty 0.1"));
    expect(e.code).toBe("OPTION_SYNTAX");
    expect(e.message).toContain('could not be read at "penalty 0.1"');
  });

  test("a piece with nothing before = is OPTION_SYNTAX", () => {
    expect(caught(() => parse("=3")).message).toContain('could not be read at "=3"');
  });

  test("an option given twice is DUPLICATE_OPTION with both values", () => {
    const e = caught(() => parse("penalty=1; Penalty=2"));
    expect(e.code).toBe("DUPLICATE_OPTION");
    expect(e.message).toBe('The option penalty is given twice ("1" and "2"). Give it once.');
  });

  test("a number passed where options are expected is OPTION_SYNTAX", () => {
    const e = caught(() => parse(3));
    expect(e.code).toBe("OPTION_SYNTAX");
    expect(e.message).toBe(
      'The options text "3" could not be read at "3". Write name=value pairs separated by semicolons (or line breaks), e.g. "penalty=0.1; level=0.9".',
    );
  });

  test("a two-column range with a number for a name is OPTION_SYNTAX", () => {
    const e = caught(() => parse([[1, 2]]));
    expect(e.code).toBe("OPTION_SYNTAX");
    expect(e.message).toBe(
      'The options text "1 | 2" could not be read at "1". Write name=value pairs separated by semicolons (or line breaks), e.g. "penalty=0.1; level=0.9".',
    );
  });
});

describe("option helpers", () => {
  test("baseline entries become a column -> category map", () => {
    expect(parseBaselines(["region:North", " size : Small "])).toEqual({ region: "North", size: "Small" });
  });

  test("a baseline entry without column:category is BAD_OPTION_VALUE", () => {
    expect(caught(() => parseBaselines(["North"])).message).toBe(
      'The option baseline cannot be "North". Write column:category, e.g. baseline=region:North.',
    );
  });

  test("every shared option has a short lower-case name, help text and a description", () => {
    const names = FIT_OPTIONS.map((o) => o.name);
    expect(new Set(names).size).toBe(names.length);
    for (const o of FIT_OPTIONS) {
      expect(o.name).toMatch(/^[a-z]{4,10}$/);
      expect(o.help.length).toBeGreaterThan(10);
    }
    expect(describeOptions([OPT_HEADERS])).toEqual([
      "headers: Whether the first row of each range holds column names (auto: detect). Choose one of: auto, yes or no. [default auto]",
    ]);
    expect(expectedText({ name: "k", type: "number", default: null, help: "" })).toBe("Enter a number.");
  });
});
