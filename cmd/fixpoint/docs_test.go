package main

import (
	"crypto/sha256"
	"encoding/hex"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
)

// The rendered first pages in docs/ are what the briefs print today: each
// PNG sits beside the SHA-256 of the PDF it was rendered from, and this
// test fails when a brief changes until the pictures are rendered again
// with -update (pdftoppm from poppler-utils).
func TestDocsBriefImages(t *testing.T) {
	docs := filepath.Join("..", "..", "docs")
	for _, tc := range []struct {
		name string
		args []string
	}{
		{"brief-class", []string{demo}},
		{"brief-fleet", []string{demoFleet}},
		{"brief-system", []string{filepath.Join("..", "..", "configs", "crane.yaml")}},
		{"brief-inspection", []string{filepath.Join("..", "..", "configs", "relief-valves.yaml")}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			pdf := filepath.Join(t.TempDir(), tc.name+".pdf")
			args := append([]string{"brief"}, tc.args...)
			if code, _, stderr := runCLI(t, append(args, "-o", pdf, "--date", "2026-12-01")...); code != 0 {
				t.Fatalf("exit %d: %s", code, stderr)
			}
			data, err := os.ReadFile(pdf)
			if err != nil {
				t.Fatal(err)
			}
			sum := sha256.Sum256(data)
			got := hex.EncodeToString(sum[:]) + "\n"
			shaFile := filepath.Join(docs, tc.name+".pdf.sha256")
			if *update {
				png := filepath.Join(docs, tc.name+"-page1")
				out, err := exec.Command(poppler(t, "pdftoppm"), "-png", "-r", "70", "-f", "1", "-l", "1", "-singlefile", pdf, png).CombinedOutput()
				if err != nil {
					t.Fatalf("pdftoppm: %v\n%s", err, out)
				}
				if err := os.WriteFile(shaFile, []byte(got), 0o644); err != nil {
					t.Fatal(err)
				}
				return
			}
			want, err := os.ReadFile(shaFile)
			if err != nil || strings.TrimSpace(string(want)) != strings.TrimSpace(got) {
				t.Errorf("docs/%s-page1.png is stale (the brief changed): run go test ./cmd/fixpoint -run DocsBriefImages -update and look at the picture", tc.name)
			}
			if _, err := os.Stat(filepath.Join(docs, tc.name+"-page1.png")); err != nil {
				t.Error(err)
			}
		})
	}
}
