package onnxexport

import (
	"errors"
	"fmt"
	"io"
	"math"
	"slices"
	"strconv"
	"strings"

	"google.golang.org/protobuf/proto"

	"surety/datasets"
	"surety/voters"
	pb "surety/voters/onnxexport/internal/onnxpb"
)

// Versions of the ONNX standard the file declares.
const (
	// IRVersion is the ONNX IR version (8: ONNX 1.10 to 1.12).
	IRVersion = 8
	// Opset is the version of the default operator set (ai.onnx).
	Opset = 17
	// MLOpset is the version of ai.onnx.ml, imported only when a
	// categorical column is read (its LabelEncoder).
	MLOpset = 2
)

// Names of the model's outputs.
const (
	OutputClass  = "vote_class"
	OutputIndex  = "vote_class_index"
	OutputMargin = "vote_margin"
	OutputTotals = "vote_totals"
)

// MissingCategory is the text of a missing cell in a categorical input.
const MissingCategory = ""

// ProducerName is the model's producer_name.
const ProducerName = "surety"

// Codes a categorical input's text becomes inside the graph: a level the
// vote names gets its index in that column's sorted list of such levels.
const (
	codeUnseen  = -1
	codeMissing = -2
)

// Property is one entry of the model's metadata_props.
type Property struct {
	Key, Value string
}

// Options sets what Write records besides the vote. The zero value writes
// no producer version and no metadata.
type Options struct {
	// ProducerVersion is the model's producer_version (the tool version).
	ProducerVersion string
	// Metadata is written as metadata_props in this order; keys must be
	// non-empty and distinct.
	Metadata []Property
}

// Input describes one input tensor of the model.
type Input struct {
	// Name is the tensor's name, the column's name.
	Name string
	Kind datasets.Kind
	// ElemType is the ONNX element type: "double" for a numeric column,
	// "string" for a categorical one. The shape is [N].
	ElemType string
	// Missing is how a missing cell is written: "NaN" for a double, the
	// empty string (MissingCategory) for a string.
	Missing string
}

// Inputs returns the model's inputs for schema, in schema order.
func Inputs(schema []voters.ColumnSpec) []Input {
	out := make([]Input, len(schema))
	for i, c := range schema {
		out[i] = Input{Name: c.Name, Kind: c.Kind, ElemType: "double", Missing: "NaN"}
		if c.Kind == datasets.Categorical {
			out[i].ElemType, out[i].Missing = "string", MissingCategory
		}
	}
	return out
}

// ErrExport is wrapped by every error of Write about the vote, the schema
// or the options (as opposed to an error of the writer).
var ErrExport = errors.New("onnx export")

func failf(format string, args ...any) error {
	return fmt.Errorf("onnxexport: %w: %s", ErrExport, fmt.Sprintf(format, args...))
}

// Write writes v as an ONNX model whose inputs are the columns of schema
// (see Inputs) to w. Every voter must be a Stump, CategoryStump or Linear
// of package voters and read columns of schema with their kinds; voters of
// weight 0 are left out, as Vote.Predict leaves them out. The same vote,
// schema and options give the same bytes.
func Write(w io.Writer, v *voters.Vote, schema []voters.ColumnSpec, opts Options) error {
	m, err := build(v, schema, opts)
	if err != nil {
		return err
	}
	b, err := proto.MarshalOptions{Deterministic: true}.Marshal(m)
	if err != nil {
		return fmt.Errorf("onnxexport: encode: %w", err)
	}
	if _, err := w.Write(b); err != nil {
		return fmt.Errorf("onnxexport: write: %w", err)
	}
	return nil
}

// check validates the vote, the schema and the options, and returns the
// index of each schema column by name.
func check(v *voters.Vote, schema []voters.ColumnSpec, opts Options) (map[string]int, error) {
	if v == nil {
		return nil, failf("no vote")
	}
	k := len(v.Classes)
	if k < 2 {
		return nil, failf("vote has %d classes, want at least 2", k)
	}
	if len(v.Weights) != len(v.Voters) {
		return nil, failf("vote has %d weights for %d voters", len(v.Weights), len(v.Voters))
	}
	for i, w := range v.Weights {
		if math.IsNaN(w) || math.IsInf(w, 0) {
			return nil, failf("weight %d is %v", i, w)
		}
	}
	if len(schema) == 0 {
		return nil, failf("the schema has no column")
	}
	outputs := []string{OutputClass, OutputIndex, OutputMargin, OutputTotals}
	col := make(map[string]int, len(schema))
	for j, c := range schema {
		switch {
		case c.Name == "":
			return nil, failf("schema column %d has no name", j)
		case c.Kind != datasets.Numeric && c.Kind != datasets.Categorical:
			return nil, failf("column %q: unknown kind %d", c.Name, c.Kind)
		case strings.HasPrefix(c.Name, internalPrefix), slices.Contains(outputs, c.Name):
			return nil, failf("column %q: the name is one the model uses for its own values; rename the column", c.Name)
		}
		if _, dup := col[c.Name]; dup {
			return nil, failf("column %q appears twice in the schema", c.Name)
		}
		col[c.Name] = j
	}
	for i, vt := range v.Voters {
		if vt == nil {
			return nil, failf("voter %d is nil", i)
		}
		if err := vt.Check(k); err != nil {
			return nil, failf("voter %d (%s): %v", i, vt.Kind(), err)
		}
		need := func(name string, kind datasets.Kind) error {
			j, ok := col[name]
			if !ok {
				return failf("voter %d (%s) reads column %q, which is not in the schema", i, vt.Kind(), name)
			}
			if schema[j].Kind != kind {
				return failf("voter %d (%s) reads column %q as %s, the schema says %s", i, vt.Kind(), name, kind, schema[j].Kind)
			}
			return nil
		}
		switch s := vt.(type) {
		case *voters.Stump:
			if err := need(s.Column, datasets.Numeric); err != nil {
				return nil, err
			}
		case *voters.CategoryStump:
			if err := need(s.Column, datasets.Categorical); err != nil {
				return nil, err
			}
			if s.Level == MissingCategory {
				return nil, failf("voter %d (%s) on column %q names the empty level, which the model reads as missing", i, vt.Kind(), s.Column)
			}
		case *voters.Linear:
			for _, in := range s.Inputs {
				if err := need(in.Column, in.Kind); err != nil {
					return nil, err
				}
				if slices.Contains(in.Levels, MissingCategory) {
					return nil, failf("voter %d (%s) on column %q names the empty level, which the model reads as missing", i, vt.Kind(), in.Column)
				}
			}
		default:
			return nil, failf("voter %d: kind %q has no ONNX form", i, vt.Kind())
		}
	}
	seen := map[string]bool{}
	for _, p := range opts.Metadata {
		if p.Key == "" {
			return nil, failf("a metadata entry has an empty key")
		}
		if seen[p.Key] {
			return nil, failf("metadata key %q appears twice", p.Key)
		}
		seen[p.Key] = true
	}
	return col, nil
}

// order returns the voters of non-zero weight in the order Vote.Predict adds
// their weights (voters/eval.go, newPlan): numeric stumps grouped by column
// in order of first appearance, within a column by threshold in order of
// first appearance; then category stumps grouped the same way by column and
// level; then every other voter in vote order. Vote.Predict groups category
// stumps by the level's code in the table it reads, which equals grouping by
// level when the table holds every level the vote names.
func order(v *voters.Vote) (nums, cats, rest []int) {
	type group struct {
		col  string
		keys []any
		vis  [][]int
	}
	add := func(gs []group, col string, key any, vi int) []group {
		g := slices.IndexFunc(gs, func(g group) bool { return g.col == col })
		if g < 0 {
			g = len(gs)
			gs = append(gs, group{col: col})
		}
		grp := &gs[g]
		c := slices.Index(grp.keys, key)
		if c < 0 {
			c = len(grp.keys)
			grp.keys = append(grp.keys, key)
			grp.vis = append(grp.vis, nil)
		}
		grp.vis[c] = append(grp.vis[c], vi)
		return gs
	}
	var ng, cg []group
	for vi, vt := range v.Voters {
		if v.Weights[vi] == 0 {
			continue
		}
		switch s := vt.(type) {
		case *voters.Stump:
			// Interface keys compare their float64 with ==, as newPlan
			// compares thresholds: 0 and -0 share a group.
			ng = add(ng, s.Column, s.Threshold, vi)
		case *voters.CategoryStump:
			cg = add(cg, s.Column, s.Level, vi)
		default:
			rest = append(rest, vi)
		}
	}
	flat := func(gs []group) []int {
		var out []int
		for _, g := range gs {
			for _, vis := range g.vis {
				out = append(out, vis...)
			}
		}
		return out
	}
	return flat(ng), flat(cg), rest
}

// build makes the model.
func build(v *voters.Vote, schema []voters.ColumnSpec, opts Options) (*pb.ModelProto, error) {
	col, err := check(v, schema, opts)
	if err != nil {
		return nil, err
	}
	k := len(v.Classes)
	nums, cats, rest := order(v)

	// levels[column] lists the levels the vote names in a categorical
	// column, sorted: the LabelEncoder's keys, their index the code.
	levels := make(map[string][]string)
	for _, vi := range append(append([]int{}, cats...), rest...) {
		switch s := v.Voters[vi].(type) {
		case *voters.CategoryStump:
			levels[s.Column] = append(levels[s.Column], s.Level)
		case *voters.Linear:
			for _, in := range s.Inputs {
				if in.Kind == datasets.Categorical {
					levels[in.Column] = append(levels[in.Column], in.Levels...)
				}
			}
		}
	}
	code := func(column, level string) float64 {
		i, _ := slices.BinarySearch(levels[column], level)
		return float64(i)
	}
	for c, ls := range levels {
		slices.Sort(ls)
		levels[c] = slices.Compact(ls)
	}

	g := newGraph()
	rows := dim{param: "N"}
	var inputs []*pb.ValueInfoProto
	usesML := false
	axis1 := g.i64("axes", []int64{1}, 1)
	cols := make([]string, len(schema))
	for j, c := range schema {
		if c.Kind == datasets.Numeric {
			inputs = append(inputs, valueInfo(c.Name, tDouble, []dim{rows},
				fmt.Sprintf("numeric column %q: one double per row, NaN where missing", c.Name)))
			cols[j] = g.op("Unsqueeze", []string{c.Name, axis1})
			continue
		}
		inputs = append(inputs, valueInfo(c.Name, tString, []dim{rows},
			fmt.Sprintf("categorical column %q: the cell's text per row, the empty string where missing", c.Name)))
		usesML = true
		ls := levels[c.Name]
		keys := append([]string{MissingCategory}, ls...)
		vals := make([]int64, len(keys))
		vals[0] = codeMissing
		for i := range ls {
			vals[i+1] = int64(i)
		}
		codes := g.opIn("ai.onnx.ml", "LabelEncoder", []string{c.Name},
			attrStrings("keys_strings", keys), attrInts("values_int64s", vals...), attrInt("default_int64", codeUnseen))
		asDouble := g.op("Cast", []string{codes}, attrInt("to", int64(tDouble)))
		cols[j] = g.op("Unsqueeze", []string{asDouble, axis1})
	}
	// x is the batch as one double matrix [N, columns], categorical cells
	// as their codes (small integers, exact in a double).
	x := cols[0]
	if len(cols) > 1 {
		x = g.op("Concat", cols, attrInt("axis", 1))
	}
	n := g.op("Gather", []string{g.op("Shape", []string{x}), g.i64("first", []int64{1}, 0)}, attrInt("axis", 0))

	var parts []string // voter classes [N, voters of the part], int64
	var weights []float64
	if len(nums) > 0 {
		m := int64(len(nums))
		idx, thr, miss, below, above := make([]int64, m), make([]float64, m), make([]bool, m), make([]int64, m), make([]int64, m)
		for i, vi := range nums {
			s := v.Voters[vi].(*voters.Stump)
			idx[i], thr[i], miss[i] = int64(col[s.Column]), s.Threshold, s.MissingBelow
			below[i], above[i] = int64(s.Below), int64(s.Above)
			weights = append(weights, v.Weights[vi])
		}
		xs := g.op("Gather", []string{x, g.i64("stump_columns", []int64{m}, idx...)}, attrInt("axis", 1))
		le := g.op("LessOrEqual", []string{xs, g.f64("thresholds", []int64{m}, thr...)})
		nan := g.op("IsNaN", []string{xs})
		low := g.op("Or", []string{le, g.op("And", []string{nan, g.boolean("missing_below", []int64{m}, miss...)})})
		parts = append(parts, g.op("Where", []string{low, g.i64("below", []int64{m}, below...), g.i64("above", []int64{m}, above...)}))
	}
	if len(cats) > 0 {
		m := int64(len(cats))
		idx, lv, miss, eq, other := make([]int64, m), make([]float64, m), make([]bool, m), make([]int64, m), make([]int64, m)
		for i, vi := range cats {
			s := v.Voters[vi].(*voters.CategoryStump)
			idx[i], lv[i], miss[i] = int64(col[s.Column]), code(s.Column, s.Level), s.MissingEqual
			eq[i], other[i] = int64(s.Equal), int64(s.Other)
			weights = append(weights, v.Weights[vi])
		}
		xc := g.op("Gather", []string{x, g.i64("category_columns", []int64{m}, idx...)}, attrInt("axis", 1))
		isLevel := g.op("Equal", []string{xc, g.f64("levels", []int64{m}, lv...)})
		missing := g.op("Equal", []string{xc, g.f64("missing", nil, codeMissing)})
		low := g.op("Or", []string{isLevel, g.op("And", []string{missing, g.boolean("missing_equal", []int64{m}, miss...)})})
		parts = append(parts, g.op("Where", []string{low, g.i64("equal", []int64{m}, eq...), g.i64("other", []int64{m}, other...)}))
	}
	if len(rest) > 0 {
		lin := make([]*voters.Linear, len(rest))
		for i, vi := range rest {
			lin[i] = v.Voters[vi].(*voters.Linear)
			weights = append(weights, v.Weights[vi])
		}
		parts = append(parts, linearClasses(g, x, n, lin, k, col, code))
	}

	// Class totals: voter i's weight goes to its class; the Scan adds the
	// voters one at a time in order, as Vote.Predict does.
	kDim := g.i64("classes", []int64{1}, int64(k))
	zero := &pb.TensorProto{Dims: []int64{1}, DataType: proto.Int32(tDouble), DoubleData: []float64{0}}
	totals := g.op("ConstantOfShape", []string{g.op("Concat", []string{n, kDim}, attrInt("axis", 0))}, attrTensor("value", zero))
	classRange := make([]int64, k)
	for c := range classRange {
		classRange[c] = int64(c)
	}
	classIdx := g.i64("class_range", []int64{int64(k)}, classRange...)
	if len(parts) > 0 {
		all := parts[0]
		if len(parts) > 1 {
			all = g.op("Concat", parts, attrInt("axis", 1))
		}
		votes := g.op("Equal", []string{g.op("Unsqueeze", []string{all, g.i64("axes", []int64{1}, 2)}), classIdx})
		contrib := g.op("Where", []string{votes, g.f64("weights", []int64{int64(len(weights)), 1}, weights...), g.f64("zero", nil, 0)})
		body := g.sub()
		state, slice := body.name("total"), body.name("contribution")
		sum := body.op("Add", []string{state, slice})
		bodyGraph := &pb.GraphProto{
			Name:   proto.String("add_voter"),
			Node:   body.nodes,
			Input:  []*pb.ValueInfoProto{valueInfo(state, tDouble, nil, ""), valueInfo(slice, tDouble, nil, "")},
			Output: []*pb.ValueInfoProto{valueInfo(sum, tDouble, nil, "")},
		}
		totals = g.op("Scan", []string{totals, contrib}, attrGraph("body", bodyGraph),
			attrInt("num_scan_inputs", 1), attrInts("scan_input_axes", 1))
	}
	best, bestTotal := argmax(g, totals, k)
	isBest := g.op("Equal", []string{g.op("Unsqueeze", []string{best, axis1}), classIdx})
	others := g.op("Where", []string{isBest, g.f64("minus_inf", nil, math.Inf(-1)), totals})
	second := g.op("ReduceMax", []string{others}, attrInts("axes", 1), attrInt("keepdims", 0))
	margin := g.op("Sub", []string{bestTotal, second})
	label := g.op("Gather", []string{g.str("class_names", []int64{int64(k)}, v.Classes...), best}, attrInt("axis", 0))

	quoted := make([]string, k)
	for c, name := range v.Classes {
		quoted[c] = strconv.Quote(name)
	}
	classList := "[" + strings.Join(quoted, ", ") + "]"
	outs := []struct {
		name, from string
		elem       int32
		shape      []dim
		doc        string
	}{
		{OutputClass, label, tString, []dim{rows}, "the vote's class name"},
		{OutputIndex, best, tInt64, []dim{rows}, "the vote's class as an index into the classes " + classList},
		{OutputMargin, margin, tDouble, []dim{rows}, "the winning class's total weight minus the runner-up's; 0 is a tie, which goes to the lower class index"},
		{OutputTotals, totals, tDouble, []dim{rows, {size: int64(k)}}, "each class's total weight, classes in the order " + classList},
	}
	var outputs []*pb.ValueInfoProto
	for _, o := range outs {
		g.nodes = append(g.nodes, &pb.NodeProto{Name: proto.String(o.name), OpType: proto.String("Identity"),
			Domain: proto.String(""), Input: []string{o.from}, Output: []string{o.name}})
		outputs = append(outputs, valueInfo(o.name, o.elem, o.shape, o.doc))
	}

	opsets := []*pb.OperatorSetIdProto{{Domain: proto.String(""), Version: proto.Int64(Opset)}}
	if usesML {
		opsets = append(opsets, &pb.OperatorSetIdProto{Domain: proto.String("ai.onnx.ml"), Version: proto.Int64(MLOpset)})
	}
	meta := []*pb.StringStringEntryProto{}
	for _, p := range opts.Metadata {
		meta = append(meta, &pb.StringStringEntryProto{Key: proto.String(p.Key), Value: proto.String(p.Value)})
	}
	m := &pb.ModelProto{
		IrVersion:    proto.Int64(IRVersion),
		OpsetImport:  opsets,
		ProducerName: proto.String(ProducerName),
		DocString: proto.String("A weighted majority vote written by surety. Inputs: one tensor [N] per column, " +
			"double for numeric columns (NaN where missing), string for categorical ones (\"\" where missing). " +
			"Outputs: vote_class, vote_class_index, vote_margin, vote_totals."),
		Graph: &pb.GraphProto{
			Name:        proto.String("surety_vote"),
			Node:        g.nodes,
			Initializer: g.inits,
			Input:       inputs,
			Output:      outputs,
		},
		MetadataProps: meta,
	}
	if opts.ProducerVersion != "" {
		m.ProducerVersion = proto.String(opts.ProducerVersion)
	}
	return m, nil
}

// argmax returns the index and value of the first largest entry along the
// last axis (k entries) of scores, as Go's loops find it: starting from
// index 0 and -Inf, a class takes the lead only when its score is greater,
// so a NaN score never leads and a tie stays with the lower index.
func argmax(g *graph, scores string, k int) (idx, best string) {
	idx = g.i64("class", nil, 0)
	best = g.f64("minus_inf", nil, math.Inf(-1))
	for c := range k {
		sc := g.op("Gather", []string{scores, g.i64("class", nil, int64(c))}, attrInt("axis", -1))
		gt := g.op("Greater", []string{sc, best})
		if c > 0 {
			idx = g.op("Where", []string{gt, g.i64("class", nil, int64(c)), idx})
		}
		best = g.op("Where", []string{gt, sc, best})
	}
	return idx, best
}

// linearClasses adds the nodes that give each linear voter's class, [N,
// len(lin)] int64. Every voter's features are laid out in slots, padded to
// the widest voter with slots that add 0; a Scan walks the slots, adding
// slot j's term of every voter and class at once, so each score is summed
// in the voter's own feature order, as Linear.Predict sums it.
func linearClasses(g *graph, x, n string, lin []*voters.Linear, k int, col map[string]int, code func(column, level string) float64) string {
	nl := len(lin)
	width := 0
	for _, l := range lin {
		d := 0
		for _, in := range l.Inputs {
			if in.Kind == datasets.Categorical {
				d += len(in.Levels)
			} else {
				d++
			}
		}
		width = max(width, d)
	}
	size := width * nl
	// Slot arrays are [width, voters] (and [width, voters, k] for the
	// weights), so the Scan's slices along axis 0 are per-slot rows.
	colIdx, level := make([]int64, size), make([]float64, size)
	isCat := make([]bool, size)
	mean, scale := make([]float64, size), make([]float64, size)
	w := make([]float64, size*k)
	bias := make([]float64, nl*k)
	for i := range size {
		// Padding: a categorical slot whose level (NaN) nothing equals, so
		// its feature and term are 0.
		isCat[i], level[i], scale[i] = true, math.NaN(), 1
	}
	for li, l := range lin {
		copy(bias[li*k:], l.Bias)
		slot := 0
		put := func(column string, cat bool, lv, mu, sc float64, off int) {
			i := slot*nl + li
			colIdx[i], isCat[i], level[i], mean[i], scale[i] = int64(col[column]), cat, lv, mu, sc
			for c := range k {
				w[i*k+c] = l.Weights[c][off]
			}
			slot++
		}
		off := 0
		for _, in := range l.Inputs {
			if in.Kind == datasets.Numeric {
				put(in.Column, false, math.NaN(), in.Mean, in.Scale, off)
				off++
				continue
			}
			for _, lv := range in.Levels {
				put(in.Column, true, code(in.Column, lv), 0, 1, off)
				off++
			}
		}
	}
	wd, nk := int64(width), int64(nl)
	shape := g.op("Concat", []string{n, g.i64("shape", []int64{2}, nk, int64(k))}, attrInt("axis", 0))
	start := g.op("Expand", []string{g.f64("bias", []int64{nk, int64(k)}, bias...), shape})
	if width == 0 {
		idx, _ := argmax(g, start, k)
		return idx
	}

	axis2 := g.i64("axes", []int64{1}, 2)
	axis1 := g.i64("axes", []int64{1}, 1)
	zero := g.f64("zero", nil, 0)
	body := g.sub()
	state := body.name("scores")
	ci, ic, lv, mu, sc, wj := body.name("column"), body.name("is_category"), body.name("level"), body.name("mean"), body.name("scale"), body.name("weights")
	v := body.op("Gather", []string{x, ci}, attrInt("axis", 1)) // [N, voters]
	ind := body.op("Cast", []string{body.op("Equal", []string{v, lv})}, attrInt("to", int64(tDouble)))
	val := body.op("Where", []string{ic, ind, v})
	nan := body.op("IsNaN", []string{val})
	diff := body.op("Unsqueeze", []string{body.op("Sub", []string{val, mu}), axis2})                                // [N, voters, 1]
	term := body.op("Div", []string{body.op("Mul", []string{diff, wj}), body.op("Unsqueeze", []string{sc, axis1})}) // (w * (x - mean)) / scale
	term = body.op("Where", []string{body.op("Unsqueeze", []string{nan, axis2}), zero, term})
	next := body.op("Add", []string{state, term})
	vi := func(name string, elem int32) *pb.ValueInfoProto { return valueInfo(name, elem, nil, "") }
	bodyGraph := &pb.GraphProto{
		Name:   proto.String("add_feature"),
		Node:   body.nodes,
		Input:  []*pb.ValueInfoProto{vi(state, tDouble), vi(ci, tInt64), vi(ic, tBool), vi(lv, tDouble), vi(mu, tDouble), vi(sc, tDouble), vi(wj, tDouble)},
		Output: []*pb.ValueInfoProto{vi(next, tDouble)},
	}
	scores := g.op("Scan", []string{start,
		g.i64("slot_columns", []int64{wd, nk}, colIdx...),
		g.boolean("slot_is_category", []int64{wd, nk}, isCat...),
		g.f64("slot_levels", []int64{wd, nk}, level...),
		g.f64("slot_means", []int64{wd, nk}, mean...),
		g.f64("slot_scales", []int64{wd, nk}, scale...),
		g.f64("slot_weights", []int64{wd, nk, int64(k)}, w...),
	}, attrGraph("body", bodyGraph), attrInt("num_scan_inputs", 6))
	idx, _ := argmax(g, scores, k)
	return idx
}
