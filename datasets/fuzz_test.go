package datasets

import (
	"bytes"
	"compress/gzip"
	"errors"
	"os"
	"testing"
)

// FuzzRead feeds arbitrary bytes to the reader: it must not panic, every
// error must be a *ParseError, and a table must be consistent. The seed
// corpus is the fixtures under testdata/datasets plus the bad-input shapes.
func FuzzRead(f *testing.F) {
	for _, name := range []string{"mixed.csv", "mixed.csv.gz", "semicolon_bom_crlf.csv"} {
		b, err := os.ReadFile(fixture(name))
		if err != nil {
			f.Fatal(err)
		}
		f.Add(b, false, false)
	}
	seeds := []string{
		"", "\n", "x,label\n", "x,label\n1,a\n2,b\n", "x,label\n1,a\n1,b,c\n",
		"x,label\n\"1,a\n", "x,label\n1\"2,a\n", "x,x\n1,2\n", ",label\n1,a\n",
		"x,label\nInf,a\n2,b\n", "x,label\n1,a\n2,b\n3,b\n4,a\n5,b\n6,a\n7,b\n8,a\n9,a\n10,b\nz,a\n",
		"x,label\n\x00,a\n", "x,label\n\xff,a\n", "\xef\xbb\xbfa;b;label\r\n1;2;x\r\n3;;y\r\n",
		"a\tlabel\n\"q\"\"\"\ta\n2\tb\n", "a|label\n\"x\ny\"|a\n1|b\n", "1,2\n3,4\n",
	}
	for _, s := range seeds {
		f.Add([]byte(s), false, false)
		f.Add([]byte(s), true, true)
	}
	var gz bytes.Buffer
	zw := gzip.NewWriter(&gz)
	zw.Write([]byte("x,label\n1,a\n2,b\n"))
	zw.Close()
	f.Add(gz.Bytes(), false, false)
	f.Add(gz.Bytes()[:gz.Len()-5], false, false)

	f.Fuzz(func(t *testing.T, data []byte, noHeader, noLabel bool) {
		opts := ReadOptions{NoHeader: noHeader, NoLabel: noLabel, DropMissingLabel: noHeader}
		if noHeader {
			opts.Label = "c2"
		}
		tab, err := Read(bytes.NewReader(data), "fuzz.csv", opts)
		if err != nil {
			var pe *ParseError
			if !errors.As(err, &pe) || pe.File != "fuzz.csv" || pe.Err == nil {
				t.Fatalf("error %T %v is not a *ParseError naming the file", err, err)
			}
			return
		}
		checkConsistent(t, tab)
		if tab.Rows == 0 || len(tab.Columns) == 0 {
			t.Fatalf("empty table without an error: %+v", tab)
		}
		if len(tab.Fingerprint.SHA256) != 64 || tab.Fingerprint.Rows != tab.Rows+tab.DroppedRows {
			t.Fatalf("fingerprint %+v for %d rows", tab.Fingerprint, tab.Rows)
		}
		var out bytes.Buffer
		if err := WriteCSV(&out, tab); err != nil {
			t.Fatal(err)
		}
	})
}
