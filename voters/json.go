package voters

import (
	"bytes"
	"encoding/json"
	"fmt"
)

// MarshalVoters writes vs as a JSON array of objects, each with a "kind"
// tag and the exported fields of its kind. Only the kinds of this package
// can be written.
func MarshalVoters(vs []Voter) ([]byte, error) {
	items := make([]any, len(vs))
	for i, v := range vs {
		switch v := v.(type) {
		case *Stump:
			items[i] = struct {
				Kind string `json:"kind"`
				*Stump
			}{KindStump, v}
		case *CategoryStump:
			items[i] = struct {
				Kind string `json:"kind"`
				*CategoryStump
			}{KindCategory, v}
		case *Linear:
			items[i] = struct {
				Kind string `json:"kind"`
				*Linear
			}{KindLinear, v}
		default:
			return nil, fmt.Errorf("voters: marshal voter %d: kind %T has no JSON form", i, v)
		}
	}
	return json.Marshal(items)
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
		var tag struct {
			Kind string `json:"kind"`
		}
		if err := json.Unmarshal(r, &tag); err != nil {
			return nil, fmt.Errorf("voters: unmarshal voter %d: %w", i, err)
		}
		var err error
		switch tag.Kind {
		case KindStump:
			v := struct {
				Kind string `json:"kind"`
				*Stump
			}{Stump: &Stump{}}
			err = strict(r, &v)
			vs[i] = v.Stump
		case KindCategory:
			v := struct {
				Kind string `json:"kind"`
				*CategoryStump
			}{CategoryStump: &CategoryStump{}}
			err = strict(r, &v)
			vs[i] = v.CategoryStump
		case KindLinear:
			v := struct {
				Kind string `json:"kind"`
				*Linear
			}{Linear: &Linear{}}
			err = strict(r, &v)
			vs[i] = v.Linear
		default:
			err = fmt.Errorf("unknown kind %q", tag.Kind)
		}
		if err != nil {
			return nil, fmt.Errorf("voters: unmarshal voter %d: %w", i, err)
		}
	}
	return vs, nil
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
