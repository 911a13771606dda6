package trainer

import (
	"bytes"
	"context"
	"encoding/json"
	"os"
	"testing"

	"github.com/santhosh-tekuri/jsonschema/v6"

	"surety/datasets"
	"surety/datasets/ucidata"
	"surety/voters"
)

// modelSchema compiles model.schema.json (JSON Schema draft 2020-12) with
// github.com/santhosh-tekuri/jsonschema, a validator outside the project.
func modelSchema(t *testing.T) *jsonschema.Schema {
	t.Helper()
	f, err := os.Open("model.schema.json")
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	doc, err := jsonschema.UnmarshalJSON(f)
	if err != nil {
		t.Fatal(err)
	}
	c := jsonschema.NewCompiler()
	if err := c.AddResource("model.schema.json", doc); err != nil {
		t.Fatal(err)
	}
	s, err := c.Compile("model.schema.json")
	if err != nil {
		t.Fatal(err)
	}
	return s
}

func validate(s *jsonschema.Schema, file []byte) error {
	v, err := jsonschema.UnmarshalJSON(bytes.NewReader(file))
	if err != nil {
		return err
	}
	return s.Validate(v)
}

// TestModelFilesMatchSchema writes model files of every voter kind (the
// demo data: numeric and categorical columns, stumps, category stumps,
// linear voters with one-hot inputs; iris: three classes; house-votes:
// categorical with missing cells) and validates them against the schema;
// files DecodeModel refuses for their shape must fail the schema too.
func TestModelFilesMatchSchema(t *testing.T) {
	s := modelSchema(t)
	small := voters.PoolConfig{Thresholds: 8, LinearVoters: new(2)}
	read := func(file, label string) *datasets.Table {
		tab, err := datasets.ReadFile(ucidata.Path(t, file), datasets.ReadOptions{Label: label})
		if err != nil {
			t.Fatal(err)
		}
		return tab
	}
	tables := []struct {
		name string
		tab  *datasets.Table
	}{
		{"demo", demoTable(t, 800, 2)},
		{"iris", read("iris_headers.csv", "Species")},
		{"house-votes", read("house-votes-84.csv", "party")},
	}
	var good []byte
	for _, tc := range tables {
		t.Run(tc.name, func(t *testing.T) {
			m, err := Train(context.Background(), tc.tab, Config{Seed: 1, Pool: small})
			if err != nil {
				t.Fatal(err)
			}
			var b bytes.Buffer
			if err := EncodeModel(&b, m); err != nil {
				t.Fatal(err)
			}
			if err := validate(s, b.Bytes()); err != nil {
				t.Fatalf("a model file train writes fails the schema: %v", err)
			}
			kinds := map[string]bool{}
			for _, v := range m.Vote.Voters {
				kinds[v.Kind()] = true
			}
			t.Logf("valid: %d voters, kinds %v, %d classes", len(m.Vote.Voters), kinds, len(m.Classes))
			if tc.name == "demo" {
				good = b.Bytes()
			}
		})
	}
	if good == nil {
		t.Fatal("no demo model")
	}
	edit := func(f func(map[string]any)) []byte {
		var v map[string]any
		if err := json.Unmarshal(good, &v); err != nil {
			t.Fatal(err)
		}
		f(v)
		b, _ := json.Marshal(v)
		return b
	}
	voter := func(v map[string]any, kind string) map[string]any {
		for _, x := range v["vote"].(map[string]any)["voters"].([]any) {
			if x.(map[string]any)["kind"] == kind {
				return x.(map[string]any)
			}
		}
		t.Fatalf("no %s voter", kind)
		return nil
	}
	// Each is refused by the schema and by DecodeModel (a stump without a
	// threshold, which encoding/json would read as 0, by the content hash).
	bad := []struct {
		name string
		file []byte
	}{
		{"format 1", edit(func(v map[string]any) { v["surety_model_format"] = 1 })},
		{"no vote", edit(func(v map[string]any) { delete(v, "vote") })},
		{"unknown key", edit(func(v map[string]any) { v["extra"] = true })},
		{"unknown column kind", edit(func(v map[string]any) {
			v["columns"].([]any)[0].(map[string]any)["kind"] = "text"
		})},
		{"unknown voter kind", edit(func(v map[string]any) { voter(v, "stump")["kind"] = "tree" })},
		{"stump without threshold", edit(func(v map[string]any) { delete(voter(v, "stump"), "threshold") })},
		{"category stump with a threshold", edit(func(v map[string]any) { voter(v, "category")["threshold"] = 1 })},
		{"linear input of unknown kind", edit(func(v map[string]any) {
			voter(v, "linear")["inputs"].([]any)[0].(map[string]any)["kind"] = "text"
		})},
		{"negative class index", edit(func(v map[string]any) { voter(v, "stump")["below"] = -1 })},
		{"negative weight", edit(func(v map[string]any) {
			w := v["vote"].(map[string]any)["weights"].([]any)
			w[0], w[1] = -0.25, w[1].(float64)+w[0].(float64)+0.25
		})},
	}
	for _, tc := range bad {
		t.Run(tc.name, func(t *testing.T) {
			if err := validate(s, tc.file); err == nil {
				t.Error("the schema accepts it")
			}
			if _, err := DecodeModel(bytes.NewReader(tc.file)); err == nil {
				t.Error("DecodeModel reads it")
			}
		})
	}
}
