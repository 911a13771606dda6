package trainer

import (
	"fmt"
	"math"
	"strings"
	"testing"
)

func TestMajorityGuess(t *testing.T) {
	// Worked by hand: with class counts 6 and 4, always answering the
	// first class errs on 4 of 10 rows.
	model := func(bound float64, rows ...int) *Model {
		m := &Model{Certificate: Certificate{RiskBound: bound}}
		if rows != nil {
			pc := &ClassCertificates{}
			for i, n := range rows {
				pc.Classes = append(pc.Classes, ClassBound{Class: string(rune('a' + i)), Rows: n})
			}
			m.Certificate.PerClass = pc
		}
		return m
	}
	tests := []struct {
		name    string
		m       *Model
		class   string
		err     float64
		ok      bool
		vacuous bool
	}{
		{name: "above the guess", m: model(0.703, 6, 4), class: "a", err: 0.4, ok: true, vacuous: true},
		{name: "at the guess", m: model(0.4, 6, 4), class: "a", err: 0.4, ok: true, vacuous: true},
		{name: "below the guess", m: model(0.39, 6, 4), class: "a", err: 0.4, ok: true},
		{name: "majority last", m: model(0.2, 1, 2, 7), class: "c", err: 0.3, ok: true},
		{name: "tie takes the first", m: model(0.6, 5, 5), class: "a", err: 0.5, ok: true, vacuous: true},
		{name: "no class counts", m: model(0.9)},
		{name: "no class counts, bound of 1", m: model(1), vacuous: true},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			g, ok := tc.m.MajorityGuess()
			if ok != tc.ok || g.Class != tc.class || g.Error != tc.err {
				t.Errorf("MajorityGuess = %+v, %v; want %q %v %v", g, ok, tc.class, tc.err, tc.ok)
			}
			if v := tc.m.Vacuous(); v != tc.vacuous {
				t.Errorf("Vacuous = %v, want %v", v, tc.vacuous)
			}
			note := tc.m.VacuousNote()
			if (note != "") != (tc.vacuous && tc.ok) {
				t.Errorf("VacuousNote = %q", note)
			}
			if note != "" && !strings.Contains(note, "no better than guessing") {
				t.Errorf("VacuousNote = %q", note)
			}
		})
	}
}

func ExampleModel_MajorityGuess() {
	m := &Model{Certificate: Certificate{RiskBound: 0.703, PerClass: &ClassCertificates{Classes: []ClassBound{
		{Class: "no", Rows: 4}, {Class: "yes", Rows: 5},
	}}}}
	g, _ := m.MajorityGuess()
	fmt.Printf("%s errs on %.3f; vacuous: %v\n", g.Class, g.Error, m.Vacuous())
	fmt.Println(m.VacuousNote())
	// Output:
	// yes errs on 0.444; vacuous: true
	// Warning: this certificate is no better than guessing: always answering "yes", the majority class, errs on 44.4% of the 9 certify rows, and the bound (70.3%) is not below that.
}

func TestFormatFigure(t *testing.T) {
	tests := []struct {
		name string
		x    float64
		want string
	}{
		{name: "negative zero from rounding", x: -1e-17, want: "0.0000"},
		{name: "negative zero", x: math.Copysign(0, -1), want: "0.0000"},
		{name: "small negative kept", x: -0.00006, want: "-0.0001"},
		{name: "positive", x: 0.17704, want: "0.1770"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			if got := FormatFigure(tc.x); got != tc.want {
				t.Errorf("FormatFigure(%g) = %q, want %q", tc.x, got, tc.want)
			}
		})
	}
}
