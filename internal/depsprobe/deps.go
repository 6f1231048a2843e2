package depsprobe

import (
	_ "github.com/blevesearch/bleve/v2"
	_ "github.com/schollz/progressbar/v3"
	_ "github.com/spf13/cobra"
	_ "github.com/spf13/cobra/doc"
	_ "golang.org/x/term"
	_ "gonum.org/v1/gonum/floats"
	_ "gonum.org/v1/gonum/floats/scalar"
	_ "gonum.org/v1/gonum/interp"
	_ "gonum.org/v1/gonum/mat"
	_ "gonum.org/v1/gonum/optimize"
	_ "gonum.org/v1/gonum/stat"
	_ "gonum.org/v1/plot"
	_ "gonum.org/v1/plot/palette/moreland"
	_ "gonum.org/v1/plot/plotter"
	_ "gonum.org/v1/plot/vg"
	_ "gonum.org/v1/plot/vg/draw"
	_ "gonum.org/v1/plot/vg/vgimg"
	_ "gonum.org/v1/plot/vg/vgsvg"
)
