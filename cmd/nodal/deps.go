package main

import (
	_ "github.com/alecthomas/kong"
	_ "github.com/alecthomas/participle/v2"
	_ "github.com/olekukonko/tablewriter"
	_ "github.com/schollz/progressbar/v3"
	_ "gonum.org/v1/gonum/mat"
	_ "gonum.org/v1/plot"
)

func main() {}
