// "Did you mean …?": which valid names count as close to a mistyped one.
import { describe, expect, test } from "vitest";
import { closeNames, didYouMean, quotedChoice, slipsAllowed } from "#server/workspace/close-names.ts";

describe("Close names for an unknown one", () => {
  test("a swap of two neighbouring letters is one slip, like a single wrong letter", () => {
    // Damerau 1964 (CACM 7(3)): transposition of two adjacent letters is one error.
    expect(closeNames("admni", ["admin", "audit"])).toEqual(["admin"]);
    expect(closeNames("admin-desk", ["admin-desks", "guest-wifi"])).toEqual(["admin-desks"]);
  });

  test("case is ignored, and the typed name itself is never suggested", () => {
    expect(closeNames("NOC-net", ["noc-net"])).toEqual(["noc-net"]);
    expect(closeNames("noc-net", ["noc-net"])).toEqual([]);
  });

  test("names beyond the slips a name of that length allows are not suggested", () => {
    // Common practice, no source: two slips turn one three-letter word into another.
    expect(slipsAllowed(3)).toBe(1);
    expect(closeNames("ssh", ["ftp", "ssl", "snmp"])).toEqual(["ssl"]);
    expect(closeNames("ops", ["noc"])).toEqual([]);
    expect(closeNames("partner-hq", ["partner-hq-backup"])).toEqual([]);
  });

  test("at most three, nearest first, ties in alphabetical order", () => {
    expect(closeNames("team-nett", ["team-net", "team-nets", "team-neta", "team-netb", "team-nett-2"])).toEqual(["team-net", "team-neta", "team-netb"]);
  });

  test("the sentence quotes the names as the messages do", () => {
    expect(quotedChoice(["a"])).toBe("“a”");
    expect(quotedChoice(["a", "b", "c"])).toBe("“a”, “b” or “c”");
    expect(didYouMean("htps", ["https", "ssh"])).toBe(" Did you mean “https”?");
    expect(didYouMean("", ["https"])).toBe("");
    expect(didYouMean("zzzz", ["https"])).toBe("");
  });
});
