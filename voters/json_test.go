package voters

import (
	"bytes"
	"encoding/json"
	"math/rand/v2"
	"reflect"
	"slices"
	"strings"
	"testing"
)

// TestJSONRoundTrip: every voter kind reads back identical, fields and
// predictions alike, and writes the same bytes again.
func TestJSONRoundTrip(t *testing.T) {
	rng := rand.New(rand.NewPCG(41, 42))
	tab := randomTable(rng, 1500, 3, 0.05)
	p, err := BuildPool(tab, allRows(tab)[:1000], PoolConfig{Thresholds: 3}, rand.New(rand.NewPCG(1, 1)))
	if err != nil {
		t.Fatal(err)
	}
	kinds := map[string]bool{}
	for _, v := range p.Voters {
		kinds[v.Kind()] = true
	}
	for _, k := range []string{KindStump, KindCategory, KindLinear} {
		if !kinds[k] {
			t.Fatalf("the pool has no %s voter to round-trip", k)
		}
	}
	data, err := MarshalVoters(p.Voters)
	if err != nil {
		t.Fatal(err)
	}
	back, err := UnmarshalVoters(data)
	if err != nil {
		t.Fatal(err)
	}
	again, err := MarshalVoters(back)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(data, again) {
		t.Fatal("the voters read back write different JSON")
	}
	if err := bindAll(back, tab); err != nil {
		t.Fatal(err)
	}
	for i := range p.Voters {
		a, b := reflect.ValueOf(p.Voters[i]).Elem(), reflect.ValueOf(back[i]).Elem()
		for f := range a.NumField() {
			if a.Type().Field(f).IsExported() && !reflect.DeepEqual(a.Field(f).Interface(), b.Field(f).Interface()) {
				t.Fatalf("voter %d field %s: %v read back as %v", i, a.Type().Field(f).Name, a.Field(f), b.Field(f))
			}
		}
		for r := range tab.Rows {
			if p.Voters[i].Predict(r) != back[i].Predict(r) {
				t.Fatalf("voter %d (%s) predicts row %d differently after the round trip", i, p.Voters[i].Describe(tab.Classes), r)
			}
		}
	}

	vote := &Vote{Voters: p.Voters, Weights: make([]float64, len(p.Voters)), Classes: p.Classes}
	for i := range vote.Weights {
		vote.Weights[i] = rng.Float64()
	}
	vj, err := json.Marshal(vote)
	if err != nil {
		t.Fatal(err)
	}
	var vb Vote
	if err := json.Unmarshal(vj, &vb); err != nil {
		t.Fatal(err)
	}
	want, _, err := vote.Predict(tab, allRows(tab))
	if err != nil {
		t.Fatal(err)
	}
	got, _, err := vb.Predict(tab, allRows(tab))
	if err != nil {
		t.Fatal(err)
	}
	if !slices.Equal(got, want) || !slices.Equal(vb.Weights, vote.Weights) || !slices.Equal(vb.Classes, vote.Classes) {
		t.Fatal("the vote read back predicts differently")
	}
}

func TestJSONErrors(t *testing.T) {
	cases := []struct {
		name, data, want string
	}{
		{"unknown kind", `[{"kind":"forest"}]`, `unknown kind "forest"`},
		{"unknown field", `[{"kind":"stump","column":"x","depth":3}]`, `unknown field "depth"`},
		{"not an array", `{"kind":"stump"}`, `cannot unmarshal`},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			_, err := UnmarshalVoters([]byte(tc.data))
			if err == nil || !strings.Contains(err.Error(), tc.want) {
				t.Fatalf("error %v, want one containing %q", err, tc.want)
			}
		})
	}
	var v Vote
	bad := `{"classes":["a","b"],"weights":[1],"voters":[{"kind":"stump","column":"x","threshold":1,"below":0,"above":7,"missing_below":false}]}`
	if err := json.Unmarshal([]byte(bad), &v); err == nil || !strings.Contains(err.Error(), "class 7 out of range") {
		t.Fatalf("error %v, want a class out of range", err)
	}
}

// FuzzVoteJSON: a model file's vote never panics on reading, binding or
// predicting.
func FuzzVoteJSON(f *testing.F) {
	tab := table([]string{"a", "b"}, []int{0, 1, 1}, numCol("x", 1, nan(), 3), catCol("c", []string{"u", "v"}, 0, 1, 4294967295))
	f.Add(`{"classes":["a","b"],"weights":[1],"voters":[{"kind":"stump","column":"x","threshold":1,"below":0,"above":1,"missing_below":true}]}`)
	f.Add(`{"classes":["a","b"],"weights":[0.5],"voters":[{"kind":"category","column":"c","level":"v","equal":1,"other":0,"missing_equal":false}]}`)
	f.Add(`{"classes":["a","b"],"weights":[1],"voters":[{"kind":"linear","inputs":[{"column":"x","kind":"numeric","mean":2,"scale":1},{"column":"c","kind":"categorical","levels":["v","w"]}],"weights":[[0,0,0],[1,2,-1]],"bias":[0,0.5]}]}`)
	f.Fuzz(func(t *testing.T, data string) {
		var v Vote
		if err := json.Unmarshal([]byte(data), &v); err != nil {
			return
		}
		if _, _, err := v.Predict(tab, []int{0, 1, 2}); err != nil {
			return
		}
		_, _ = v.Errors(tab, []int{0, 1, 2})
	})
}
