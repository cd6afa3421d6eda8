package condition

func (e *estimator) counts(ts []Transition) [][][]int {
	c := make([][][]int, len(e.o.Actions))
	for a := range c {
		c[a] = make([][]int, e.o.States)
		for s := range c[a] {
			c[a][s] = make([]int, e.o.States)
		}
	}
	for _, t := range ts {
		c[t.Action][t.From][t.To]++
	}
	return c
}

func rowTotal(c []int) int {
	t := 0
	for _, x := range c {
		t += x
	}
	return t
}
