// Package reports presents fixpoint's results: terminal tables (via
// tablewriter), CSV and JSON for other programs, and PDF briefs (via
// gofpdf). It formats; it does no mathematics beyond formatting.
//
// Key types: Advice (a certified policy with its certificate), with
// WriteTable, WriteJSON and WriteCSV.
//
// Conventions. Every output carries the Caution: tables print it below
// the table, JSON under "caution", CSV as a leading comment line. Numbers
// in tables use fixed decimals with "," between thousands and are
// right-aligned; JSON keeps full float64 precision; CSV has six decimals.
// Output is deterministic: rows follow the scale order and map keys are
// sorted.
package reports
