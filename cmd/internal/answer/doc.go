// Package answer turns loaded model files and typed settings into solved,
// certified report views: the class, average-criterion, inspection,
// robust, system, comparison, sensitivity, forecast and fleet-plan
// answers that the commands then write. It does the work between the
// loader (package modelfile) and the presentation (package reports):
// the discount override, the criterion, the life figures, the safety
// warnings (returned for the outputs and reported through Env.Warn), the
// size guard of joint models, and the exit-3 error of an answer that is
// not certified (Uncertified), with a remedy that fits why.
package answer

import "context"

// Env is what an answer needs from the run: its context, where warnings
// and notes go, and the fixpoint version printed in reports.
type Env struct {
	Ctx        context.Context
	Warn, Note func(string)
	Version    string
}

// Uncertified says that an answer was written but its proven gap is above
// the tolerance (exit code 3).
type Uncertified struct{ Msg string }

func (e *Uncertified) Error() string { return e.Msg }
