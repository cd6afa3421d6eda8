// Package modelfile reads fixpoint's model files: class configs (one class
// of equipment), system files (components sharing a shutdown) and fleet
// files (class configs, an inventory CSV and a budget per year). Load
// reads a file once, recognises its kind — also the kinds that are not
// models (inspection-records and inventory CSVs, settings files, empty and
// binary files), so that a command can say in one line who takes them —
// and decodes models with a strict YAML walker: unknown keys (with a "did
// you mean"), duplicate keys, types, finite numbers, names without control
// characters or separators, a node budget against alias bombs, caps on
// the faults listed and on the hint searches, cancellation. Every fault is
// a *Fault with the file, line and field path, and names the action and
// the row in words where it is about a transition row.
//
// A class config may carry an inspection block (Inspection, in
// inspection.go): the inspection cost, the allowed intervals, the hidden
// failures and their risk cost, and the statutory limit; its faults are
// located like the model's, and blocks too large to build are refused.
//
// Semantics stay in the libraries: condition.Model.Validate,
// costs.Schedule.Validate and inspect.Plan.Validate find the faults, this
// package locates them.
// A class config may carry an uncertainty: block (Uncertainty): the kind
// of ambiguity set, a radius (one, or per action and state) or a
// confidence with the observed transitions per row, widened supports and
// the rule for rows without observations; solve --robust builds the
// sets of package optimize/robust from it, and LocateUncertainty locates
// the faults that library finds.
//
// Semantics stay in the libraries: condition.Model.Validate and
// costs.Schedule.Validate find the faults, this package locates them.
// The decoded Header carries the file's period as a costs.Period and its
// rate or factor as a costs.Discount, built once.
//
// Paths in a fleet file are relative to it; a fleet's class files must be
// class configs (recognised before their content is decoded, so fleet
// files naming each other cannot recurse), and nothing of a file of the
// wrong kind is echoed. File.Inputs lists every file a load read, so that
// no output replaces one.
package modelfile
