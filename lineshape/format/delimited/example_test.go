package delimited_test

import (
	"fmt"
	"os"
	"strings"

	"statemix/lineshape/format/delimited"
)

func ExampleRead() {
	text := `# Cu LMM, 2 eV modulation
Energy (eV)	dN/dE
905.0	0.12
905.5	0.10
906.1	-0.05
`
	s, err := delimited.Read(strings.NewReader(text), "cu.txt", delimited.Options{})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%v, %d channels, %.1f..%.1f eV, uniform %v\n", s.Mode, s.Len(), s.Axis.Lo(), s.Axis.Hi(), s.Axis.Uniform())
	fmt.Println(s.Meta.Comments[0])

	_, err = delimited.Read(strings.NewReader("905\t0.12\n905,5\t0,10\n"), "comma.txt", delimited.Options{})
	fmt.Println(err)
	// Output:
	// derivative, 3 channels, 905.0..906.1 eV, uniform false
	// Cu LMM, 2 eV modulation
	// comma.txt: line 2: column 1: "905,5" is not a number (decimal commas are not supported: use a decimal point)
}

func ExampleWrite() {
	s, _ := delimited.Read(strings.NewReader("energy counts\n100 7\n101 9\n"), "in", delimited.Options{})
	delimited.Write(os.Stdout, s, delimited.WriteOptions{Separator: '\t'})
	// Output:
	// energy_ev	counts
	// 100	7
	// 101	9
}
