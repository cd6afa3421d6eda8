// Package reports presents fixpoint's results: terminal tables (via
// tablewriter), CSV and JSON for other programs, spreadsheet workbooks
// (via excelize) and PDF briefs (via gofpdf). It formats; it does no
// mathematics beyond formatting.
//
// Key types: Advice (a certified policy with its certificate), with
// WriteTable, WriteJSON and WriteCSV; the views of tables also have
// WriteXLSX, a workbook built by one builder (workbook.go): the caution on
// the first row of every sheet, frozen headings, numbers as numbers with
// number formats (currency in its ISO 4217 minor unit), native charts and
// an Assumptions sheet.
//
// Conventions. Every output carries the Caution: tables print it below
// the table, JSON under "caution", CSV as a leading comment line,
// workbooks on the first row of every sheet. Numbers in tables use fixed
// decimals with "," between thousands and are right-aligned; JSON keeps
// full float64 precision; CSV has six decimals; workbooks keep 15
// significant digits. Output is deterministic: rows follow the scale
// order and map keys are sorted; workbooks carry a fixed date, so that
// the same view gives the same bytes.
package reports
