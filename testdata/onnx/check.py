"""Checks ONNX files with the onnx package's checker, for the Go tests (called
by voters/onnxexport/onnxrun): onnx.checker.check_model with full_check (which also runs
shape inference) on each path given. Prints the onnx version; exits 1 with
the checker's message on the first file that fails. Run with Debian's
python3-onnx: /usr/bin/python3 testdata/onnx/check.py FILE..."""
import sys

import onnx

print("onnx", onnx.__version__)
for path in sys.argv[1:]:
    model = onnx.load(path)
    try:
        onnx.checker.check_model(model, full_check=True)
    except Exception as err:  # the checker raises its own ValidationError
        print(f"{path}: {err}", file=sys.stderr)
        sys.exit(1)
    print(path, "ok")
