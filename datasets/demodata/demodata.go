// Package demodata generates Surety's demo data: an invented scenario with a
// known true rule, so a demo can measure a vote's true error on as many fresh
// rows as it likes and set it beside the certificate.
//
// The scenario: a water utility inspects pipe segments and records whether
// each one leaked within a year of inspection. A segment leaks when its
// "stress score" is high; the score depends on age, pressure, material, soil
// and past repairs. A fixed share of labels is then flipped at random (the
// inspection misses or misreports some leaks), so the best possible error
// rate is known: it is exactly the flip rate.
//
// The package only writes CSV text; reading it back is the datasets reader's
// job, so the demo exercises the same path as a user's file.
package demodata

import (
	"bufio"
	"fmt"
	"io"
	"math/rand/v2"
	"strconv"
)

// Columns are the CSV header fields, the label ("leaked") last.
var Columns = []string{"age_years", "pressure_bar", "diameter_mm", "material", "soil", "past_repairs", "depth_m", "leaked"}

// Label is the name of the label column.
const Label = "leaked"

// Classes are the label's values.
var Classes = []string{"leak", "sound"}

// Config sets the generator. The zero value means the defaults below.
type Config struct {
	// Rows is the number of rows to write. Default 4000.
	Rows int
	// Noise is the share of labels flipped at random, the best error rate
	// any classifier can reach. Default 0.05. Negative means no noise.
	Noise float64
	// MissingRate is the share of depth_m cells left empty (a field that is
	// often not surveyed). Default 0.1. Negative means none.
	MissingRate float64
}

func (c Config) withDefaults() Config {
	if c.Rows == 0 {
		c.Rows = 4000
	}
	switch {
	case c.Noise == 0:
		c.Noise = 0.05
	case c.Noise < 0:
		c.Noise = 0
	}
	switch {
	case c.MissingRate == 0:
		c.MissingRate = 0.1
	case c.MissingRate < 0:
		c.MissingRate = 0
	}
	return c
}

// BayesError returns the error rate of the true rule on labels with the
// configured noise: no classifier can do better on average.
func (c Config) BayesError() float64 { return c.withDefaults().Noise }

var (
	materials = []string{"cast_iron", "ductile_iron", "pvc", "steel"}
	soils     = []string{"clay", "loam", "sand"}
)

// Segment is one generated row before it is written.
type Segment struct {
	Age, Pressure, Diameter, Depth float64
	Material, Soil                 string
	Repairs                        int
	DepthMissing                   bool
	// Leak is the true rule's answer; Leaked is the recorded label, Leak
	// flipped with probability Noise.
	Leak, Leaked bool
}

// TrueRule is the known rule behind the labels: true means "leak".
// Depth does not enter it; the generator adds it as a distractor.
func TrueRule(s Segment) bool {
	score := s.Age/10 + (s.Pressure-4)*0.8 + float64(s.Repairs)*0.9
	switch s.Material {
	case "cast_iron":
		score += 1.5
	case "steel":
		score += 0.7
	case "pvc":
		score -= 1.0
	}
	if s.Soil == "clay" {
		score += 0.8
	}
	return score > 5.5
}

// Next draws one segment from rng.
func (c Config) Next(rng *rand.Rand) Segment {
	c = c.withDefaults()
	s := Segment{
		Age:      float64(rng.IntN(90)) + 1,
		Pressure: 2 + 6*rng.Float64(),
		Diameter: []float64{100, 150, 200, 300, 450}[rng.IntN(5)],
		Material: materials[rng.IntN(len(materials))],
		Soil:     soils[rng.IntN(len(soils))],
		Repairs:  min(rng.IntN(4)*rng.IntN(3), 5),
		Depth:    0.8 + 1.6*rng.Float64(),
	}
	s.DepthMissing = rng.Float64() < c.MissingRate
	s.Leak = TrueRule(s)
	s.Leaked = s.Leak
	if rng.Float64() < c.Noise {
		s.Leaked = !s.Leaked
	}
	return s
}

// Write writes cfg.Rows rows of CSV (with a header) drawn from a PCG source
// seeded by seed: the same seed gives the same bytes on every platform.
func Write(w io.Writer, cfg Config, seed uint64) error {
	cfg = cfg.withDefaults()
	rng := rand.New(rand.NewPCG(seed, 0x5e7e7))
	bw := bufio.NewWriter(w)
	for i, c := range Columns {
		if i > 0 {
			bw.WriteByte(',')
		}
		bw.WriteString(c)
	}
	bw.WriteByte('\n')
	var buf []byte
	for range cfg.Rows {
		s := cfg.Next(rng)
		buf = buf[:0]
		buf = strconv.AppendFloat(buf, s.Age, 'f', -1, 64)
		buf = append(buf, ',')
		buf = strconv.AppendFloat(buf, s.Pressure, 'f', 2, 64)
		buf = append(buf, ',')
		buf = strconv.AppendFloat(buf, s.Diameter, 'f', -1, 64)
		buf = append(buf, ',')
		buf = append(buf, s.Material...)
		buf = append(buf, ',')
		buf = append(buf, s.Soil...)
		buf = append(buf, ',')
		buf = strconv.AppendInt(buf, int64(s.Repairs), 10)
		buf = append(buf, ',')
		if !s.DepthMissing {
			buf = strconv.AppendFloat(buf, s.Depth, 'f', 2, 64)
		}
		buf = append(buf, ',')
		if s.Leaked {
			buf = append(buf, Classes[0]...)
		} else {
			buf = append(buf, Classes[1]...)
		}
		buf = append(buf, '\n')
		if _, err := bw.Write(buf); err != nil {
			return fmt.Errorf("demodata: %w", err)
		}
	}
	if err := bw.Flush(); err != nil {
		return fmt.Errorf("demodata: %w", err)
	}
	return nil
}
