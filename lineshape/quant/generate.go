package quant

// The binding-energy table is generated from xraylib 4.0.0 through Debian's
// python3-xraylib (apt-get install python3-xraylib); the output is committed.
//go:generate sh -c "/usr/bin/python3 gen_binding.py && gofmt -w binding_gen.go"
