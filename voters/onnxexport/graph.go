package onnxexport

import (
	"fmt"

	"google.golang.org/protobuf/proto"

	pb "surety/voters/onnxexport/internal/onnxpb"
)

// Element types of the tensors this package writes (onnx.proto's
// TensorProto.DataType).
const (
	tDouble = int32(pb.TensorProto_DOUBLE)
	tInt64  = int32(pb.TensorProto_INT64)
	tBool   = int32(pb.TensorProto_BOOL)
	tString = int32(pb.TensorProto_STRING)
)

// internalPrefix starts the name of every value the graph makes, so that
// none can be a column's name (Write checks it).
const internalPrefix = "surety/"

// graph collects the nodes and constants of one ONNX graph. The Scan body
// is a graph of its own that reads the main graph's values by name (outer
// scope), so both share one name counter.
type graph struct {
	nodes []*pb.NodeProto
	inits []*pb.TensorProto
	names *int
}

func newGraph() *graph { return &graph{names: new(int)} }

// sub returns an empty graph whose names do not clash with g's.
func (g *graph) sub() *graph { return &graph{names: g.names} }

func (g *graph) name(hint string) string {
	*g.names++
	return fmt.Sprintf("%s%s_%d", internalPrefix, hint, *g.names)
}

// op adds a node of the standard domain with one output and returns the
// output's name.
func (g *graph) op(opType string, inputs []string, attrs ...*pb.AttributeProto) string {
	return g.opIn("", opType, inputs, attrs...)
}

// opIn adds a node of domain with one output.
func (g *graph) opIn(domain, opType string, inputs []string, attrs ...*pb.AttributeProto) string {
	out := g.name(opType)
	g.nodes = append(g.nodes, &pb.NodeProto{
		Name:      proto.String(out),
		OpType:    proto.String(opType),
		Domain:    proto.String(domain),
		Input:     inputs,
		Output:    []string{out},
		Attribute: attrs,
	})
	return out
}

// tensor adds a constant (an initializer) and returns its name.
func (g *graph) tensor(hint string, t *pb.TensorProto) string {
	t.Name = proto.String(g.name(hint))
	g.inits = append(g.inits, t)
	return t.GetName()
}

// f64 adds a double constant of shape dims; nil dims make a scalar. The
// values are stored as their IEEE bits (double_data is fixed64), so none
// is rounded.
func (g *graph) f64(hint string, dims []int64, v ...float64) string {
	return g.tensor(hint, &pb.TensorProto{Dims: dims, DataType: proto.Int32(tDouble), DoubleData: v})
}

func (g *graph) i64(hint string, dims []int64, v ...int64) string {
	return g.tensor(hint, &pb.TensorProto{Dims: dims, DataType: proto.Int32(tInt64), Int64Data: v})
}

// boolean adds a bool constant; ONNX stores bools in int32_data.
func (g *graph) boolean(hint string, dims []int64, v ...bool) string {
	data := make([]int32, len(v))
	for i, b := range v {
		if b {
			data[i] = 1
		}
	}
	return g.tensor(hint, &pb.TensorProto{Dims: dims, DataType: proto.Int32(tBool), Int32Data: data})
}

func (g *graph) str(hint string, dims []int64, v ...string) string {
	data := make([][]byte, len(v))
	for i, s := range v {
		data[i] = []byte(s)
	}
	return g.tensor(hint, &pb.TensorProto{Dims: dims, DataType: proto.Int32(tString), StringData: data})
}

func attrInt(name string, v int64) *pb.AttributeProto {
	return &pb.AttributeProto{Name: proto.String(name), Type: pb.AttributeProto_INT.Enum(), I: proto.Int64(v)}
}

func attrInts(name string, v ...int64) *pb.AttributeProto {
	return &pb.AttributeProto{Name: proto.String(name), Type: pb.AttributeProto_INTS.Enum(), Ints: v}
}

func attrStrings(name string, v []string) *pb.AttributeProto {
	data := make([][]byte, len(v))
	for i, s := range v {
		data[i] = []byte(s)
	}
	return &pb.AttributeProto{Name: proto.String(name), Type: pb.AttributeProto_STRINGS.Enum(), Strings: data}
}

func attrGraph(name string, g *pb.GraphProto) *pb.AttributeProto {
	return &pb.AttributeProto{Name: proto.String(name), Type: pb.AttributeProto_GRAPH.Enum(), G: g}
}

func attrTensor(name string, t *pb.TensorProto) *pb.AttributeProto {
	return &pb.AttributeProto{Name: proto.String(name), Type: pb.AttributeProto_TENSOR.Enum(), T: t}
}

// dim is one dimension of a value's shape: a number, or a name for a size
// known only at run time ("N", the rows of a batch).
type dim struct {
	size  int64
	param string
}

// valueInfo declares a graph input or output: its element type and shape
// (nil shape: rank unknown).
func valueInfo(name string, elem int32, shape []dim, doc string) *pb.ValueInfoProto {
	tt := &pb.TypeProto_Tensor{ElemType: proto.Int32(elem)}
	if shape != nil {
		tt.Shape = &pb.TensorShapeProto{}
		for _, d := range shape {
			pd := &pb.TensorShapeProto_Dimension{}
			if d.param != "" {
				pd.Value = &pb.TensorShapeProto_Dimension_DimParam{DimParam: d.param}
			} else {
				pd.Value = &pb.TensorShapeProto_Dimension_DimValue{DimValue: d.size}
			}
			tt.Shape.Dim = append(tt.Shape.Dim, pd)
		}
	}
	vi := &pb.ValueInfoProto{Name: proto.String(name), Type: &pb.TypeProto{Value: &pb.TypeProto_TensorType{TensorType: tt}}}
	if doc != "" {
		vi.DocString = proto.String(doc)
	}
	return vi
}
