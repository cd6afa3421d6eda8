package settings

import (
	"strings"

	"github.com/spf13/pflag"

	"fixpoint/optimize/robust"
)

// Robust holds the settings of a robust solve: advice that holds for
// every transition matrix in the ambiguity sets.
type Robust struct {
	// On asks for robust advice: --robust, or any --robust-* setting.
	On bool
	// Set is the kind of set of --robust-set, when HasSet.
	Set    robust.Kind
	HasSet bool
	// Radius is --robust-radius, one radius for every row (the config's
	// uncertainty block is then not used), when HasRadius.
	Radius    float64
	HasRadius bool
	// Confidence is --robust-confidence, radii derived from the config's
	// observations, when HasConfidence.
	Confidence    float64
	HasConfidence bool
}

// RobustKeys are the settings of a robust solve, for NotFor.
var RobustKeys = []string{"robust", "robust-set", "robust-radius", "robust-confidence"}

// AddRobust declares --robust, --robust-set, --robust-radius and
// --robust-confidence.
func AddRobust(f *pflag.FlagSet) {
	f.Bool("robust", false, "robust advice: best for the worst transition matrices the config's uncertainty block allows")
	f.String("robust-set", "", "ambiguity `set`: l1 or kl (default: the config's uncertainty.set, else l1)")
	f.String("robust-radius", "", "one `radius` for every row, ignoring the config's uncertainty block (L1 distance; nats with --robust-set kl)")
	f.String("robust-confidence", "", "radii from the config's uncertainty.observations at this `level` (0.9 or 90%)")
}

// Robust reads the settings of a robust solve.
func (s *Source) Robust() (Robust, error) {
	var r Robust
	var err error
	if r.On, err = s.boolean("robust"); err != nil {
		return r, err
	}
	if v := s.text("robust-set"); v != "" {
		if r.Set, err = robust.ParseKind(v); err != nil {
			return r, Errorf("%s: unknown set %q; want l1 or kl", where("robust-set"), clip(v))
		}
		r.HasSet = true
	}
	if s.text("robust-radius") != "" {
		if r.Radius, err = s.number("robust-radius"); err != nil {
			return r, err
		}
		if r.Radius < 0 {
			return r, Errorf("%s: %g is not a radius >= 0", where("robust-radius"), r.Radius)
		}
		r.HasRadius = true
	}
	if v := s.text("robust-confidence"); v != "" {
		if r.Confidence, err = s.number("robust-confidence"); err != nil {
			return r, err
		}
		if !(r.Confidence > 0 && r.Confidence < 1) {
			pct := ""
			if !strings.HasSuffix(v, "%") && r.Confidence >= 50 && r.Confidence < 100 {
				pct = "; write " + clip(v) + "% for " + clip(v) + " percent"
			}
			return r, Errorf("%s: %s is not a level in (0, 1)%s", where("robust-confidence"), clip(v), pct)
		}
		r.HasConfidence = true
	}
	if r.HasRadius && r.HasConfidence {
		return r, Errorf("give either --robust-radius or --robust-confidence, not both")
	}
	r.On = r.On || r.HasSet || r.HasRadius || r.HasConfidence
	return r, nil
}
