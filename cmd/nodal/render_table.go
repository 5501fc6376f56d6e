package main

import (
	"io"

	"github.com/olekukonko/tablewriter"
	"github.com/olekukonko/tablewriter/tw"
)

// table is a terminal table with headers kept as written (freq_hz stays
// freq_hz) and numbers right-aligned.
type table struct {
	t *tablewriter.Table
}

// newTable starts a table on w with the given column headers.
func newTable(w io.Writer, headers ...string) *table {
	t := tablewriter.NewTable(w,
		tablewriter.WithHeaderAutoFormat(tw.Off),
		tablewriter.WithRowAlignment(tw.AlignRight),
		tablewriter.WithHeaderAlignment(tw.AlignCenter),
	)
	t.Header(toAny(headers)...)
	return &table{t: t}
}

// newTextTable starts a table whose cells are text, left-aligned.
func newTextTable(w io.Writer, headers ...string) *table {
	t := tablewriter.NewTable(w,
		tablewriter.WithHeaderAutoFormat(tw.Off),
		tablewriter.WithRowAlignment(tw.AlignLeft),
		tablewriter.WithHeaderAlignment(tw.AlignCenter),
	)
	t.Header(toAny(headers)...)
	return &table{t: t}
}

// row appends one row of cells.
func (t *table) row(cells ...string) error { return t.t.Append(toAny(cells)...) }

// render writes the table.
func (t *table) render() error { return t.t.Render() }

func toAny(s []string) []any {
	out := make([]any, len(s))
	for i, v := range s {
		out[i] = v
	}
	return out
}
