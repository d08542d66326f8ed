// CSV for audit: RFC 4180 quoting, CRLF line ends, and text cells that a spreadsheet would run as a
// formula (=, +, -, @, tab, CR at the start) prefixed with an apostrophe (OWASP "CSV injection").
export type Cell = string | number | boolean | Date | null | undefined;

const FORMULA_START = /^[=+\-@\t\r]/;

export function csvCell(v: Cell): string {
  if (v === null || v === undefined) return "";
  let s: string;
  if (v instanceof Date) s = v.toISOString();
  else if (typeof v === "number") s = Number.isFinite(v) ? String(v) : "";
  else if (typeof v === "boolean") s = v ? "yes" : "no";
  else s = FORMULA_START.test(v) ? `'${v}` : v;
  return /[",\r\n]/.test(s) || s !== s.trim() ? `"${s.replace(/"/g, '""')}"` : s;
}

export function csvLine(cells: readonly Cell[]): string {
  return cells.map(csvCell).join(",");
}

export function toCsv<Row>(columns: readonly { header: string; value: (r: Row) => Cell }[], rows: readonly Row[]): string {
  const lines = [csvLine(columns.map((c) => c.header))];
  for (const r of rows) lines.push(csvLine(columns.map((c) => c.value(r))));
  return `${lines.join("\r\n")}\r\n`;
}

/** A figure rounded for the file (stored values keep full precision). */
export const round = (v: number | null, digits: number): number | null => (v === null ? null : Math.round(v * 10 ** digits) / 10 ** digits);

export function csvResponse(body: string, filename: string): Response {
  // A byte-order mark so spreadsheet programs read UTF-8 names correctly.
  return new Response(`\uFEFF${body}`, {
    headers: {
      "Content-Type": "text/csv; charset=utf-8",
      "Content-Disposition": `attachment; filename="${filename}"`,
      "Cache-Control": "private, no-store",
    },
  });
}
