package format_test

import (
	"fmt"

	"statemix/lineshape/format"
)

func ExampleDetect() {
	for _, head := range []string{
		"VAMAS Surface Chemical Analysis Standard Data Transfer Format 1988 May 4\r\n",
		`{"schema":"statemix.spectrum/v1","spectra":[]}`,
		"\x93NUMPY\x01\x00",
		"energy,counts\n100,5\n",
	} {
		fmt.Println(format.Detect([]byte(head)))
	}
	// Output:
	// vamas
	// json
	// npy
	// delimited
}
