// Package onnxpb holds the Go types of the ONNX protobuf messages, generated
// by protoc-gen-go from the onnx.proto that Debian's python3-onnx (1.12.0)
// ships. Only package onnxexport and its test support onnxrun use it;
// regenerate it as DEVELOPERS.md says (section "voters/onnxexport") rather
// than editing onnx.pb.go.
package onnxpb
