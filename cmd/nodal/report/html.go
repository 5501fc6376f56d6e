package report

import (
	"bytes"
	_ "embed"
	"fmt"
	"html"
	"html/template"
	"io"
	"regexp"
	"strconv"
	"strings"

	"nodal/cmd/nodal/plot"
)

//go:embed report.html.tmpl
var pageTemplate string

//go:embed report.css
var pageCSS string

// page is parsed once; html/template values are safe for concurrent use
// and never modified after this.
var page = template.Must(template.New("report").Parse(pageTemplate))

// htmlFigure is a plot ready for the page.
type htmlFigure struct {
	SVG     template.HTML
	Caption string
}

// htmlSection is a section with its plots rendered.
type htmlSection struct {
	section
	SVGs []htmlFigure
}

// Render writes d as one self-contained HTML page to w: CSS and SVG
// plots are inline, nothing is fetched and no script runs. The markup is
// also well-formed XML (XHTML-compatible). It fails on a nil d, a source
// checksum that is not 64 hex digits, or a plot that cannot be drawn.
func Render(w io.Writer, d *Data) error {
	title, secs, foot, err := build(d)
	if err != nil {
		return err
	}
	view := struct {
		Title    string
		CSS      template.CSS
		Sections []htmlSection
		Foot     footer
	}{Title: title, CSS: template.CSS(pageCSS), Foot: foot}
	for _, s := range secs {
		hs := htmlSection{section: s}
		for _, p := range s.Figures {
			svg, err := inlineSVG(p)
			if err != nil {
				return fmt.Errorf("report: section %q: %w", s.Heading, err)
			}
			hs.SVGs = append(hs.SVGs, htmlFigure{SVG: svg, Caption: p.Caption})
		}
		view.Sections = append(view.Sections, hs)
	}
	var buf bytes.Buffer // render fully before writing: no half pages
	if err := page.Execute(&buf, view); err != nil {
		return fmt.Errorf("report: %w", err)
	}
	if _, err := buf.WriteTo(w); err != nil {
		return fmt.Errorf("report: writing HTML: %w", err)
	}
	return nil
}

// inlineSVG returns the plot's SVG element for embedding in HTML: the XML
// prolog and comments before <svg> removed, an accessible label added and
// the plot font given generic fall-backs.
func inlineSVG(p Plot) (template.HTML, error) {
	src := p.SVG
	if p.Figure != nil {
		var b strings.Builder
		if err := p.Figure.Encode(&b, plot.FormatSVG); err != nil {
			return "", err
		}
		src = b.String()
	}
	i := strings.Index(src, "<svg")
	if i < 0 {
		return "", fmt.Errorf("plot %q has no <svg> element", p.Caption)
	}
	src = src[i+len("<svg"):]
	label := p.Caption
	if label == "" {
		label = "plot"
	}
	src = strings.ReplaceAll(src, "font-family:Liberation Sans;", "font-family:'Liberation Sans',Arial,Helvetica,sans-serif;")
	// s-plane maps (square, or two squares one above the other with the
	// zoom) are drawn at one width, about their natural size: every map
	// panel is then the same size on the page and its fonts keep their
	// point size, rather than being blown up to the column width
	class := "plot-wide"
	if m := svgSize.FindStringSubmatch(src); m != nil {
		if w, errW := strconv.ParseFloat(m[1], 64); errW == nil {
			if h, errH := strconv.ParseFloat(m[2], 64); errH == nil && w <= h {
				class = "plot-square"
			}
		}
	}
	return template.HTML(`<svg class="` + class + `" role="img" aria-label="` + html.EscapeString(label) + `"` + src), nil // SVG from our own plot package
}

// svgSize finds the width and height attributes of the <svg> element.
var svgSize = regexp.MustCompile(`^\s+width="([0-9.]+)pt"\s+height="([0-9.]+)pt"`)
