// CSV writing: RFC 4180 quoting read back by an independent parser (csv-parse), and text cells a
// spreadsheet would run as formulas neutralised.
import { parse } from "csv-parse/sync";
import { describe, expect, it } from "vitest";
import { csvCell, toCsv } from "../../lib/exports/csv";

describe("csv cells", () => {
  it("quotes commas, quotes and line breaks, and doubles inner quotes", () => {
    // RFC 4180 section 2, rules 5-7
    expect(csvCell('Dr "Kit" Brannagh, SpR')).toBe('"Dr ""Kit"" Brannagh, SpR"');
    expect(csvCell("two\nlines")).toBe('"two\nlines"');
    expect(csvCell("plain")).toBe("plain");
    expect(csvCell(null)).toBe("");
    expect(csvCell(32.4)).toBe("32.4");
    expect(csvCell(true)).toBe("yes");
    expect(csvCell(new Date("2026-11-02T09:00:00Z"))).toBe("2026-11-02T09:00:00.000Z");
  });

  it("neutralises text that a spreadsheet would run as a formula, but not numbers", () => {
    // OWASP, CSV injection: prefix cells starting with = + - @ tab or CR
    expect(csvCell("=HYPERLINK(\"http://x\")")).toBe("\"'=HYPERLINK(\"\"http://x\"\")\"");
    expect(csvCell("+44 1632 960123")).toBe("'+44 1632 960123");
    expect(csvCell("@SUM(A1)")).toBe("'@SUM(A1)");
    expect(csvCell(-5)).toBe("-5");
  });
});

describe("csv files", () => {
  it("reads back, row for row and cell for cell, with an independent parser", () => {
    // RFC 4180: a parser must recover exactly the written values
    const rows = [
      { hn: "LGH-100234", who: 'Okonkwo-Reyes, "Mateo"', pct: 39.45, note: "line one\r\nline two" },
      { hn: "LGH-100871", who: "Haldane", pct: null, note: "" },
    ];
    const csv = toCsv<(typeof rows)[number]>(
      [
        { header: "hospital_number", value: (r) => r.hn },
        { header: "name", value: (r) => r.who },
        { header: "collins_percent", value: (r) => r.pct },
        { header: "text", value: (r) => r.note },
      ],
      rows,
    );
    expect(csv.endsWith("\r\n")).toBe(true);
    const back = parse<Record<string, string>>(csv, { columns: true });
    expect(back).toEqual([
      { hospital_number: "LGH-100234", name: 'Okonkwo-Reyes, "Mateo"', collins_percent: "39.45", text: "line one\r\nline two" },
      { hospital_number: "LGH-100871", name: "Haldane", collins_percent: "", text: "" },
    ]);
  });
});
