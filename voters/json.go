package voters

import (
	"bytes"
	"encoding/json"
	"fmt"
)

// kinds makes an empty voter of each kind, for reading the JSON form. A
// new kind adds its line here; nothing else switches on kinds.
var kinds = map[string]func() Voter{
	KindStump:    func() Voter { return &Stump{} },
	KindCategory: func() Voter { return &CategoryStump{} },
	KindLinear:   func() Voter { return &Linear{} },
}

// MarshalVoters writes vs as a JSON array of objects, each with a "kind"
// tag first and then the exported fields of its kind. Only the kinds of
// this package can be written.
func MarshalVoters(vs []Voter) ([]byte, error) {
	var b bytes.Buffer
	b.WriteByte('[')
	for i, v := range vs {
		if v == nil || kinds[v.Kind()] == nil {
			return nil, fmt.Errorf("voters: marshal voter %d: kind %T has no JSON form", i, v)
		}
		body, err := json.Marshal(v)
		if err != nil {
			return nil, fmt.Errorf("voters: marshal voter %d: %w", i, err)
		}
		if i > 0 {
			b.WriteByte(',')
		}
		tag, _ := json.Marshal(v.Kind())
		b.WriteString(`{"kind":`)
		b.Write(tag)
		if len(body) > 2 {
			b.WriteByte(',')
		}
		b.Write(body[1:])
	}
	b.WriteByte(']')
	return b.Bytes(), nil
}

// UnmarshalVoters reads the array MarshalVoters writes; unknown kinds and
// unknown fields are errors. The voters come back unbound.
func UnmarshalVoters(data []byte) ([]Voter, error) {
	var raw []json.RawMessage
	if err := json.Unmarshal(data, &raw); err != nil {
		return nil, fmt.Errorf("voters: unmarshal voters: %w", err)
	}
	vs := make([]Voter, len(raw))
	for i, r := range raw {
		v, err := unmarshalVoter(r)
		if err != nil {
			return nil, fmt.Errorf("voters: unmarshal voter %d: %w", i, err)
		}
		vs[i] = v
	}
	return vs, nil
}

// unmarshalVoter reads one tagged object: the tag picks the kind, and the
// other fields must all belong to it.
func unmarshalVoter(r json.RawMessage) (Voter, error) {
	var fields map[string]json.RawMessage
	if err := json.Unmarshal(r, &fields); err != nil {
		return nil, err
	}
	var kind string
	if err := json.Unmarshal(fields["kind"], &kind); err != nil {
		return nil, fmt.Errorf("no kind tag")
	}
	newVoter := kinds[kind]
	if newVoter == nil {
		return nil, fmt.Errorf("unknown kind %q", kind)
	}
	delete(fields, "kind")
	body, err := json.Marshal(fields)
	if err != nil {
		return nil, err
	}
	v := newVoter()
	if err := strict(body, v); err != nil {
		return nil, err
	}
	return v, nil
}

func strict(data []byte, v any) error {
	dec := json.NewDecoder(bytes.NewReader(data))
	dec.DisallowUnknownFields()
	return dec.Decode(v)
}

type voteJSON struct {
	Classes []string        `json:"classes"`
	Weights []float64       `json:"weights"`
	Voters  json.RawMessage `json:"voters"`
}

// MarshalJSON writes the vote as {"classes", "weights", "voters"}, the
// voters as MarshalVoters writes them.
func (v *Vote) MarshalJSON() ([]byte, error) {
	vs, err := MarshalVoters(v.Voters)
	if err != nil {
		return nil, err
	}
	return json.Marshal(voteJSON{Classes: v.Classes, Weights: v.Weights, Voters: vs})
}

// UnmarshalJSON reads what MarshalJSON writes and checks the voters
// against the classes.
func (v *Vote) UnmarshalJSON(data []byte) error {
	var j voteJSON
	if err := strict(data, &j); err != nil {
		return fmt.Errorf("voters: unmarshal vote: %w", err)
	}
	vs, err := UnmarshalVoters(j.Voters)
	if err != nil {
		return err
	}
	if len(j.Weights) != len(vs) {
		return fmt.Errorf("voters: unmarshal vote: %d weights for %d voters", len(j.Weights), len(vs))
	}
	if err := checkVoters(vs, len(j.Classes)); err != nil {
		return fmt.Errorf("voters: unmarshal vote: %w", err)
	}
	*v = Vote{Voters: vs, Weights: j.Weights, Classes: j.Classes}
	return nil
}
