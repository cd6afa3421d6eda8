package modelfile

import (
	"bytes"
	"context"
	"fmt"
	"os"
	"strconv"
	"strings"

	"go.yaml.in/yaml/v3"

	"fixpoint/condition"
	"fixpoint/reports"
)

// MergeFitted writes the estimated rows into a copy of the class config's
// YAML, keeping its comments: a map-form row is replaced or its state's
// entry set, a matrix-form row replaced. Rows on fewer than minN
// transitions, rows where the config does not admit the action, and
// passive rows of unsafe states are not merged (notes say so). The result
// is validated before it is returned. With the counting estimator, the
// number of transitions behind each merged row is written under
// uncertainty.observations (added or updated), so that solve --robust can
// size the row's ambiguity set from it; rows kept keep their count.
func MergeFitted(c *Class, rep *reports.FitReport, minN int) ([]byte, []string, error) {
	data, err := os.ReadFile(c.Path)
	if err != nil {
		return nil, nil, &Fault{File: c.Path, Msg: OpenProblem(err)}
	}
	var root yaml.Node
	if err := yaml.Unmarshal(data, &root); err != nil {
		return nil, nil, &Fault{File: c.Path, Msg: err.Error()}
	}
	doc := root.Content[0]
	actionsNode := lookup(doc, "actions")
	var notes []string
	var counted []observed
	for a, rows := range rep.Fit.Rows {
		ai := c.Model.ActionIndex(rep.Fit.Actions[a])
		if ai < 0 || actionsNode == nil || ai >= len(actionsNode.Content) {
			continue
		}
		act := actionsNode.Content[ai]
		for s, r := range rows {
			if r == nil {
				continue
			}
			name := rep.States[s]
			switch {
			case r.N < minN:
				notes = append(notes, fmt.Sprintf("merge: row %s of action %s rests on %d transitions (fewer than %d); the config's row is kept", name, rep.Fit.Actions[a], r.N, minN))
				continue
			case !rep.Writable(a, s):
				notes = append(notes, fmt.Sprintf("merge: passive row for unsafe state %s not written", name))
				continue
			case !c.Model.Actions[ai].Admissible(s):
				notes = append(notes, fmt.Sprintf("merge: the config does not admit %s in %s; that row is not written", rep.Fit.Actions[a], name))
				continue
			}
			comment := "fitted: " + rep.RowComment(a, s)
			if t := lookup(act, "transitions"); t != nil {
				setKey(t, name, flowMap(rep, r.P, comment))
			} else if m := lookup(act, "matrix"); m != nil && s < len(m.Content) {
				m.Content[s] = flowSeq(r.P, comment)
			}
			if rep.Fit.Method == condition.Counting {
				counted = append(counted, observed{rep.Fit.Actions[a], name, r.N})
			}
		}
	}
	setObservations(doc, counted)
	root.HeadComment = strings.TrimSpace(root.HeadComment + "\n# Transition rows merged by fixpoint fit from " + rep.Source + "; check them before use.")
	var buf bytes.Buffer
	enc := yaml.NewEncoder(&buf)
	enc.SetIndent(2)
	if err := enc.Encode(&root); err != nil {
		return nil, nil, err
	}
	if f, err := Decode(context.Background(), "merged config", buf.Bytes(), Options{}); err != nil || f.Kind != ClassFile {
		return nil, nil, fmt.Errorf("the merged config would not be valid (%v); nothing written", err)
	}
	return buf.Bytes(), notes, nil
}

// observed is the number of transitions behind one merged row.
type observed struct {
	action, state string
	n             int
}

// setObservations writes the counts of the merged rows under
// uncertainty.observations, adding the block and the action's map where
// missing.
func setObservations(doc *yaml.Node, counted []observed) {
	if len(counted) == 0 {
		return
	}
	u := lookup(doc, "uncertainty")
	if u == nil || u.Kind != yaml.MappingNode {
		u = &yaml.Node{Kind: yaml.MappingNode}
		setKey(doc, "uncertainty", u)
		doc.Content[len(doc.Content)-2].HeadComment = "Transitions observed per row (fit's n), for solve --robust: add confidence: 0.9 (or --robust-confidence 0.9)\nto size each row's ambiguity set from them."
	}
	obs := lookup(u, "observations")
	if obs == nil || obs.Kind != yaml.MappingNode {
		obs = &yaml.Node{Kind: yaml.MappingNode}
		setKey(u, "observations", obs)
	}
	for _, c := range counted {
		act := lookup(obs, c.action)
		if act == nil || act.Kind != yaml.MappingNode {
			act = &yaml.Node{Kind: yaml.MappingNode, Style: yaml.FlowStyle}
			setKey(obs, c.action, act)
		}
		setKey(act, c.state, &yaml.Node{Kind: yaml.ScalarNode, Tag: "!!int", Value: strconv.Itoa(c.n)})
	}
}

func lookup(m *yaml.Node, key string) *yaml.Node {
	if m == nil || m.Kind != yaml.MappingNode {
		return nil
	}
	for i := 0; i+1 < len(m.Content); i += 2 {
		if m.Content[i].Value == key {
			return m.Content[i+1]
		}
	}
	return nil
}

func setKey(m *yaml.Node, key string, v *yaml.Node) {
	for i := 0; i+1 < len(m.Content); i += 2 {
		if m.Content[i].Value == key {
			m.Content[i+1] = v
			return
		}
	}
	m.Content = append(m.Content, &yaml.Node{Kind: yaml.ScalarNode, Tag: "!!str", Value: key}, v)
}

func flowMap(rep *reports.FitReport, p []float64, comment string) *yaml.Node {
	n := &yaml.Node{Kind: yaml.MappingNode, Style: yaml.FlowStyle, LineComment: comment}
	for j, x := range reports.Rounded(p) {
		if x != 0 {
			n.Content = append(n.Content,
				&yaml.Node{Kind: yaml.ScalarNode, Tag: "!!str", Value: rep.States[j]},
				&yaml.Node{Kind: yaml.ScalarNode, Value: strconv.FormatFloat(x, 'f', -1, 64)})
		}
	}
	return n
}

func flowSeq(p []float64, comment string) *yaml.Node {
	n := &yaml.Node{Kind: yaml.SequenceNode, Style: yaml.FlowStyle, LineComment: comment}
	for _, x := range reports.Rounded(p) {
		n.Content = append(n.Content, &yaml.Node{Kind: yaml.ScalarNode, Value: strconv.FormatFloat(x, 'f', -1, 64)})
	}
	return n
}
