package voters

import (
	"testing"

	"surety/datasets"
	"surety/datasets/ucidata"
)

// readUCI reads golearn's copy of a UCI dataset with the datasets reader.
func readUCI(t *testing.T, name, label string) *datasets.Table {
	t.Helper()
	tab, err := datasets.ReadFile(ucidata.Path(t, name), datasets.ReadOptions{Label: label})
	if err != nil {
		t.Fatal(err)
	}
	return tab
}
