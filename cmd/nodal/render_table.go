package main

import (
	"context"
	"io"

	"github.com/olekukonko/tablewriter"
	"github.com/olekukonko/tablewriter/tw"
)

// table is a terminal table with headers kept as written (freq_hz stays
// freq_hz) and numbers right-aligned. It stops with errOutputInterrupted when the
// context of its writer (see writerContext) is cancelled, while rows are
// added or while it renders.
type table struct {
	t    *tablewriter.Table
	ctx  context.Context
	rows int
}

// rowsPerCheck is how many rows are added between context checks.
const rowsPerCheck = 1024

// newTable starts a table on w with the given column headers.
func newTable(w io.Writer, headers ...string) *table {
	t := tablewriter.NewTable(w,
		tablewriter.WithHeaderAutoFormat(tw.Off),
		tablewriter.WithRowAlignment(tw.AlignRight),
		tablewriter.WithHeaderAlignment(tw.AlignCenter),
	)
	t.Header(toAny(headers)...)
	return &table{t: t, ctx: writerContext(w)}
}

// newTextTable starts a table whose cells are text, left-aligned.
func newTextTable(w io.Writer, headers ...string) *table {
	t := tablewriter.NewTable(w,
		tablewriter.WithHeaderAutoFormat(tw.Off),
		tablewriter.WithRowAlignment(tw.AlignLeft),
		tablewriter.WithHeaderAlignment(tw.AlignCenter),
	)
	t.Header(toAny(headers)...)
	return &table{t: t, ctx: writerContext(w)}
}

// row appends one row of cells.
func (t *table) row(cells ...string) error {
	if t.rows++; t.rows%rowsPerCheck == 0 && t.ctx.Err() != nil {
		return errOutputInterrupted
	}
	return t.t.Append(toAny(cells)...)
}

// render writes the table. The table library renders in one call that
// cannot be stopped (about 2 s per 100,000 rows), so a cancellable table
// renders on its own goroutine and render returns as soon as the context is
// cancelled; the abandoned rendering then only meets failing writes.
func (t *table) render() error {
	if t.ctx.Done() == nil {
		return t.t.Render()
	}
	done := make(chan error, 1)
	go func() { done <- t.t.Render() }()
	select {
	case err := <-done:
		return err
	case <-t.ctx.Done():
		return errOutputInterrupted
	}
}

func toAny(s []string) []any {
	out := make([]any, len(s))
	for i, v := range s {
		out[i] = v
	}
	return out
}
