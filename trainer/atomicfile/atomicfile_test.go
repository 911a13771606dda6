package atomicfile

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func TestCreateNamesTheTarget(t *testing.T) {
	dir := t.TempDir()
	cases := []struct{ name, path, want string }{
		{"missing folder", filepath.Join(dir, "nowhere", "m.json"), "the folder " + filepath.Join(dir, "nowhere") + " does not exist"},
		{"a folder", dir, dir + ": it is a folder"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			err := Write(c.path, []byte("x"))
			if err == nil || !strings.Contains(err.Error(), c.want) || strings.Contains(err.Error(), ".tmp-") {
				t.Errorf("error %v, want one saying %q without the temporary name", err, c.want)
			}
		})
	}
}

// A write that fails half-way leaves the earlier file and no temporary.
func TestWriteWithKeepsEarlierFile(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "out.txt")
	if err := Write(path, []byte("old")); err != nil {
		t.Fatal(err)
	}
	err := WriteWith(path, func(f *os.File) error {
		f.WriteString("half")
		return os.ErrInvalid
	})
	if err == nil {
		t.Fatal("want the writer's error")
	}
	if b, _ := os.ReadFile(path); string(b) != "old" {
		t.Errorf("file holds %q, want the earlier %q", b, "old")
	}
	if ents, _ := os.ReadDir(dir); len(ents) != 1 {
		t.Errorf("folder holds %d entries, want only the file", len(ents))
	}
}
