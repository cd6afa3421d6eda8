package settings

import (
	"fmt"
	"math"
	"strings"

	"github.com/spf13/pflag"
)

// Rates is the list of rates to compare (empty: the config's), with the
// inflation that makes them nominal.
type Rates struct {
	List         []float64
	Inflation    float64
	HasInflation bool
}

// AddRates declares --rates and --inflation.
func AddRates(f *pflag.FlagSet, usage string) {
	f.String("rates", "", usage)
	f.String("inflation", "", "annual inflation `rate`: --rates are then nominal")
}

// MaxRates bounds the rates of a comparison.
const MaxRates = 200

// Rates reads --rates (a list or lo:hi[:step]) and --inflation.
func (s *Source) Rates() (Rates, error) {
	var r Rates
	if text := s.text("rates"); text != "" {
		list, err := ParseRates(text)
		if err != nil {
			return r, Errorf("%s: %v", where("rates"), err)
		}
		r.List = list
	}
	if s.text("inflation") != "" {
		x, err := s.rate("inflation")
		if err != nil {
			return r, err
		}
		if !(x > -1) {
			return r, Errorf("%s: %g is not a rate above -1", where("inflation"), x)
		}
		r.Inflation, r.HasInflation = x, true
	}
	return r, nil
}

// ParseRates reads a list of rates ("2%,3.5%,0.05") or a range
// "lo:hi[:step]" (default step 1 point, or a quarter of a narrow range).
func ParseRates(text string) ([]float64, error) {
	if strings.Contains(text, ":") {
		parts := strings.Split(text, ":")
		if len(parts) > 3 {
			return nil, fmt.Errorf("%q is not lo:hi or lo:hi:step", clip(text))
		}
		var v [3]float64
		for i, p := range parts {
			x, err := ParseRate(p)
			if err != nil {
				return nil, err
			}
			v[i] = x
		}
		lo, hi, step := v[0], v[1], v[2]
		if !(hi > lo) {
			return nil, fmt.Errorf("range %s needs lo < hi", clip(text))
		}
		if len(parts) < 3 {
			step = 0.01
			if hi-lo < 0.04 {
				step = (hi - lo) / 4
			}
		}
		if !(step > 0) || (hi-lo)/step > MaxRates {
			return nil, fmt.Errorf("step %g gives more than %d rates", step, MaxRates)
		}
		var rates []float64
		for k := 0; ; k++ {
			r := lo + float64(k)*step
			if r > hi+step*1e-9 {
				break
			}
			rates = append(rates, math.Round(r*1e12)/1e12)
		}
		if last := rates[len(rates)-1]; last < hi-step*1e-9 {
			rates = append(rates, hi)
		}
		return rates, nil
	}
	var rates []float64
	for _, p := range strings.Split(text, ",") {
		x, err := ParseRate(p)
		if err != nil {
			return nil, err
		}
		rates = append(rates, x)
	}
	if len(rates) > MaxRates {
		return nil, fmt.Errorf("%d rates, over the limit of %d", len(rates), MaxRates)
	}
	return rates, nil
}
