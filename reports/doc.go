// Package reports presents fixpoint's results: terminal tables (via
// tablewriter), CSV and JSON for other programs, spreadsheet workbooks
// (via excelize) and PDF briefs (via gofpdf). It formats; the arithmetic (equivalent annual costs, yearly
// sums, bounds) is done in costs and optimize.
//
// Key types: Header (model, currency, period, discount, condition scale,
// unsafe set, source), embedded in every view; the views Advice,
// AverageAdvice, Comparison, Sensitivity, Forecast, SystemAdvice,
// PlanReport, SimulationReport, FitReport, InspectionAdvice and
// InspectionCalendar, each with WriteTable, WriteJSON and WriteCSV; the
// briefs Brief (a class, with the optional pages "How sure are we?" from
// RobustAdvice.Page and the rate comparison), InspectionBrief (a class
// with an inspection block, with the page "When to look again" from
// InspectionAdvice.LookAgain), SystemBrief and FleetBrief (a budget plan,
// with the optional page of PlanRates), each with WritePDF. Page 1 of
// every brief carries the recommendation in words, its table, the key
// assumptions, the traceability and the sign-off; what does not fit
// continues on page 2, never the sign-off. The views of
// tables also have WriteXLSX, a workbook built by one builder
// (workbook.go): the caution on the first row of every sheet, frozen
// headings, numbers as numbers with number formats (currency in its ISO
// 4217 minor unit), native charts and an Assumptions sheet; workbooks
// carry a fixed date, so that the same view gives the same bytes.
//
// Conventions. Every output carries the Caution: tables print it below
// the table, JSON under "caution", CSV as a leading comment line followed
// by comment lines saying the model, currency, period, criterion and
// discount. Advice that takes a unit out of service, and safety warnings,
// are said in words in every output. Every output of inspection advice
// also says InspectionRule: the statutory interval and a competent
// person's scheme of examination take precedence over the advised
// interval. Tables and briefs say "condition",
// JSON and CSV "state". Numbers in tables use fixed decimals with ","
// between thousands and are right-aligned; JSON keeps full float64
// precision; CSV has six decimals, and text cells that a spreadsheet would
// run as a formula are neutralised. Printable escapes control and
// invisible format characters (Hidden) in text for a terminal. Output is deterministic: rows follow
// the scale order and map keys are sorted.
package reports
