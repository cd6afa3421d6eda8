package condition

import (
	"strings"
	"testing"
)

// FuzzReadRecords: any input gives an error or records that BuildPanel
// accepts; never a panic.
func FuzzReadRecords(f *testing.F) {
	f.Add("unit,date,condition,action\np1,2020-01-01,good,\np1,2021-01-03,worn,\np1,2022-01-02,good,overhaul\n")
	f.Add("Unit,Date,Condition\n\"a\",2020-02-29,failed\n")
	f.Add("unit,date,condition\np,2020-01-01\n")
	f.Add("\ufeffunit;date;condition\n")
	f.Fuzz(func(t *testing.T, in string) {
		recs, _, err := ReadRecords(strings.NewReader(in), scale3)
		if err != nil {
			return
		}
		for _, r := range recs {
			if r.Condition < 0 || r.Condition >= len(scale3) || r.Unit == "" {
				t.Fatalf("bad record %+v", r)
			}
		}
		p, _, _ := BuildPanel(recs, PanelOptions{Actions: []string{"leave"}, NewActions: true})
		for _, tr := range p.Transitions {
			if tr.Days <= 0 {
				t.Fatalf("transition of %d days", tr.Days)
			}
		}
	})
}
