package main

import (
	"path/filepath"
	"testing"
)

// The text of train and show, pinned: a change to what a user reads shows
// up as a diff of testdata/train-demo.txt or show-demo.txt (rerun with
// -update to accept it). The temporary folder is written as $DIR.
func TestTrainShowGolden(t *testing.T) {
	dir := t.TempDir()
	data := demoFile(t, dir, 1200)
	model := filepath.Join(dir, "model.json")
	runGolden(t, dir, []goldenCase{
		{"train", "train-demo.txt", []string{"train", "--data", data, "--label", "leaked", "--out", model, "--linear-voters", "4", "--thresholds", "8"}},
		{"show", "show-demo.txt", []string{"show", model, "--top", "5"}},
	})
}
