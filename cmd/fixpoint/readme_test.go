package main

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestREADMEExamples runs every command shown in a ```console block of the
// README (lines starting "$ fixpoint ") in a scratch directory holding a
// copy of configs/ (so that files the examples write land there), and
// checks the output printed under it: line for line, where a line "..."
// stands for any number of lines. With -update the blocks without "..."
// are rewritten from the real output.
func TestREADMEExamples(t *testing.T) {
	root := filepath.Join("..", "..")
	path := filepath.Join(root, "README.md")
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	scratch := t.TempDir()
	if err := copyDir(filepath.Join(root, "configs"), filepath.Join(scratch, "configs")); err != nil {
		t.Fatal(err)
	}
	wd, _ := os.Getwd()
	if err := os.Chdir(scratch); err != nil {
		t.Fatal(err)
	}
	defer os.Chdir(wd)
	t.Setenv("NO_COLOR", "1")
	lines := strings.SplitAfter(string(data), "\n")
	var out strings.Builder
	examples := 0
	for i := 0; i < len(lines); i++ {
		out.WriteString(lines[i])
		if strings.TrimSpace(lines[i]) != "```console" {
			continue
		}
		// One block: commands and the output each prints.
		var block []string
		for i++; i < len(lines) && strings.TrimSpace(lines[i]) != "```"; i++ {
			block = append(block, strings.TrimSuffix(lines[i], "\n"))
		}
		for j := 0; j < len(block); {
			cmd := block[j]
			if !strings.HasPrefix(cmd, "$ fixpoint ") {
				t.Fatalf("README.md: console block line %q: want a line starting \"$ fixpoint \"", cmd)
			}
			k := j + 1
			for k < len(block) && !strings.HasPrefix(block[k], "$ ") {
				k++
			}
			want := block[j+1 : k]
			args := strings.Fields(strings.TrimPrefix(cmd, "$ fixpoint "))
			var stdout, stderr bytes.Buffer
			code := run(args, bytes.NewReader(nil), &stdout, &stderr)
			examples++
			got := strings.Split(strings.TrimSuffix(stdout.String()+stderr.String(), "\n"), "\n")
			if stdout.Len()+stderr.Len() == 0 {
				got = nil
			}
			if code != 0 && code != exitUncertified && !strings.Contains(strings.Join(want, "\n"), "fixpoint: ") {
				t.Errorf("README.md: %s: exit %d:\n%s", cmd, code, stderr.String())
			}
			elided := false
			for _, w := range want {
				elided = elided || w == "..."
			}
			switch {
			case *update && !elided:
				out.WriteString(cmd + "\n")
				for _, g := range got {
					out.WriteString(g + "\n")
				}
			default:
				if *update {
					out.WriteString(strings.Join(block[j:k], "\n") + "\n")
				}
				if !matchLines(got, want) {
					t.Errorf("README.md: %s: the output differs from the README (rerun with -update for blocks without \"...\"):\n--- got\n%s\n--- README\n%s",
						cmd, strings.Join(got, "\n"), strings.Join(want, "\n"))
				}
			}
			j = k
		}
		if i < len(lines) {
			out.WriteString(lines[i])
		}
	}
	if examples == 0 {
		t.Fatal("README.md has no ```console examples")
	}
	if *update {
		if err := os.WriteFile(filepath.Join(wd, path), []byte(out.String()), 0o644); err != nil {
			t.Fatal(err)
		}
	}
}

// matchLines matches got against want, where a want line "..." matches
// any run of lines (also none).
func matchLines(got, want []string) bool {
	if len(want) == 0 {
		return len(got) == 0
	}
	if want[0] == "..." {
		for i := 0; i <= len(got); i++ {
			if matchLines(got[i:], want[1:]) {
				return true
			}
		}
		return false
	}
	return len(got) > 0 && strings.TrimRight(got[0], " ") == strings.TrimRight(want[0], " ") && matchLines(got[1:], want[1:])
}
