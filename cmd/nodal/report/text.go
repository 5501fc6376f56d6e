package report

import (
	"bufio"
	"bytes"
	"fmt"
	"io"
	"strings"

	"github.com/olekukonko/tablewriter"
	"github.com/olekukonko/tablewriter/tw"
)

// RenderText writes the same sections as Render for a terminal: headings,
// paragraphs, indented formulas and box-drawn tables (tablewriter). Plots
// are named by their captions only.
func RenderText(w io.Writer, d *Data) error {
	title, secs, foot, err := build(d)
	if err != nil {
		return err
	}
	var buf bytes.Buffer // render fully before writing
	bw := bufio.NewWriter(&buf)
	fmt.Fprintf(bw, "%s\n%s\n", title, strings.Repeat("=", max(len([]rune(title)), 8)))
	made := "nodal " + foot.Version
	if foot.Generated != "" {
		made = foot.Generated + " · " + made
	}
	if foot.CommandLine != "" {
		made += " · " + foot.CommandLine
	}
	fmt.Fprintln(bw, made)
	for _, s := range secs {
		fmt.Fprintf(bw, "\n%s\n%s\n", s.Heading, strings.Repeat("-", len([]rune(s.Heading))))
		for _, p := range s.Paras {
			fmt.Fprintln(bw, p)
		}
		for _, b := range s.Blocks {
			if b.Label != "" {
				fmt.Fprintf(bw, "%s:\n", b.Label)
			}
			for _, line := range strings.Split(b.Text, "\n") {
				fmt.Fprintf(bw, "    %s\n", line)
			}
		}
		for _, f := range s.Figures {
			c := f.Caption
			if c == "" {
				c = "plot"
			}
			fmt.Fprintf(bw, "[%s: in the HTML report]\n", c)
		}
		for _, t := range s.Tables {
			if err := writeTable(bw, t); err != nil {
				return fmt.Errorf("report: table in %q: %w", s.Heading, err)
			}
		}
	}
	fmt.Fprintf(bw, "\n%s\nnodal %s · circuit file %s · SHA-256 %s\n", foot.Safety, foot.Version, foot.SourceName, foot.SHA256)
	if err := bw.Flush(); err != nil {
		return fmt.Errorf("report: %w", err)
	}
	if _, err := buf.WriteTo(w); err != nil {
		return fmt.Errorf("report: writing text: %w", err)
	}
	return nil
}

// writeTable renders t with tablewriter, numeric columns right-aligned.
func writeTable(w io.Writer, t table) error {
	if t.Caption != "" {
		fmt.Fprintln(w, "\n"+t.Caption+":")
	}
	align := make([]tw.Align, len(t.Header))
	for i := range align {
		align[i] = tw.AlignLeft
		if i < len(t.Right) && t.Right[i] {
			align[i] = tw.AlignRight
		}
	}
	tb := tablewriter.NewTable(w,
		tablewriter.WithHeaderAutoFormat(tw.Off),
		tablewriter.WithRowAlignmentConfig(tw.CellAlignment{PerColumn: align}),
	)
	tb.Header(t.Header)
	for _, r := range t.Rows {
		if err := tb.Append(r.Cells); err != nil {
			return err
		}
	}
	return tb.Render()
}
