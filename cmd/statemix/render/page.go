package render

import (
	"fmt"
	"html/template"
	"io"
	"strings"
)

// Page is a self-contained HTML document: a title and sections.
type Page struct {
	Title    string
	Subtitle string
	Sections []Section
}

// Section is a headed part of a Page.
type Section struct {
	Heading string
	Blocks  []Block
}

// Block is a piece of a Section.
type Block interface {
	html() (template.HTML, error)
}

type paragraph string

func (p paragraph) html() (template.HTML, error) {
	return template.HTML("<p>" + template.HTMLEscapeString(string(p)) + "</p>"), nil
}

// Paragraph returns a block of text.
func Paragraph(text string) Block { return paragraph(text) }

type pre string

func (p pre) html() (template.HTML, error) {
	return template.HTML("<pre>" + template.HTMLEscapeString(string(p)) + "</pre>"), nil
}

// Preformatted returns a block of monospaced text (a command line, a hash).
func Preformatted(text string) Block { return pre(text) }

type warnings []string

func (ws warnings) html() (template.HTML, error) {
	if len(ws) == 0 {
		return "", nil
	}
	var sb strings.Builder
	sb.WriteString(`<ul class="warn">`)
	for _, w := range ws {
		sb.WriteString("<li>" + template.HTMLEscapeString(w) + "</li>")
	}
	sb.WriteString("</ul>")
	return template.HTML(sb.String()), nil
}

// Warnings returns a highlighted list of warnings (nothing if empty).
func Warnings(ws []string) Block { return warnings(ws) }

type keyValues [][2]string

func (kv keyValues) html() (template.HTML, error) {
	var sb strings.Builder
	sb.WriteString(`<dl class="kv">`)
	for _, p := range kv {
		sb.WriteString("<dt>" + template.HTMLEscapeString(p[0]) + "</dt><dd>" + template.HTMLEscapeString(p[1]) + "</dd>")
	}
	sb.WriteString("</dl>")
	return template.HTML(sb.String()), nil
}

// KeyValues returns a list of labelled values.
func KeyValues(pairs [][2]string) Block { return keyValues(pairs) }

func (t *Table) html() (template.HTML, error) {
	var sb strings.Builder
	sb.WriteString(`<div class="scroll"><table><thead><tr>`)
	for i, h := range t.Header {
		sb.WriteString("<th" + t.class(i) + ">" + template.HTMLEscapeString(h) + "</th>")
	}
	sb.WriteString("</tr></thead><tbody>")
	for _, r := range t.Rows {
		sb.WriteString("<tr>")
		for i, c := range r {
			sb.WriteString("<td" + t.class(i) + ">" + template.HTMLEscapeString(c) + "</td>")
		}
		sb.WriteString("</tr>")
	}
	sb.WriteString("</tbody></table></div>")
	return template.HTML(sb.String()), nil
}

func (t *Table) class(i int) string {
	if i < len(t.Right) && t.Right[i] {
		return ` class="num"`
	}
	return ""
}

// TableBlock returns t as a block.
func TableBlock(t *Table) Block { return t }

type figureBlock struct {
	f       *Figure
	caption string
}

func (fb figureBlock) html() (template.HTML, error) {
	svg, err := fb.f.InlineSVG()
	if err != nil {
		return "", err
	}
	s := "<figure>" + svg
	if fb.caption != "" {
		s += "<figcaption>" + template.HTMLEscapeString(fb.caption) + "</figcaption>"
	}
	return template.HTML(s + "</figure>"), nil
}

// FigureBlock returns f as an inline SVG figure with a caption.
func FigureBlock(f *Figure, caption string) Block { return figureBlock{f, caption} }

const pageCSS = `
:root{color-scheme:light}
body{font-family:system-ui,-apple-system,"Segoe UI",Roboto,sans-serif;margin:0 auto;max-width:60rem;padding:1rem;line-height:1.45;color:#1d1d1d;background:#fff}
h1{font-size:1.4rem;margin:.2rem 0}h2{font-size:1.1rem;border-bottom:1px solid #ccc;padding-bottom:.2rem;margin-top:1.6rem}
.sub{color:#555;margin:0 0 1rem}
.scroll{overflow-x:auto}
table{border-collapse:collapse;font-variant-numeric:tabular-nums;min-width:100%}
th,td{padding:.3rem .6rem;border-bottom:1px solid #e2e2e2;text-align:left;white-space:nowrap}
th{background:#f3f5f7}td.num,th.num{text-align:right}
figure{margin:1rem 0}figure svg{width:100%;height:auto;max-width:100%}
figcaption{font-size:.9rem;color:#444}
ul.warn{background:#fff6e0;border-left:4px solid #d99a06;padding:.5rem .5rem .5rem 1.8rem}
dl.kv{display:grid;grid-template-columns:max-content 1fr;gap:.2rem 1rem}dl.kv dt{color:#555}dl.kv dd{margin:0;overflow-wrap:anywhere}
pre{background:#f6f6f6;padding:.5rem;overflow-x:auto;white-space:pre-wrap;overflow-wrap:anywhere}
@media (max-width:40rem){body{padding:.6rem}th,td{padding:.25rem .45rem}figure{overflow-x:auto}figure svg{width:32rem;max-width:none}}
@media print{body{max-width:none;padding:0}h2{break-after:avoid}figure,table{break-inside:avoid}ul.warn{background:none}}
`

var pageTmpl = template.Must(template.New("page").Parse(`<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>{{.Title}}</title>
<style>{{.CSS}}</style>
</head>
<body>
<h1>{{.Title}}</h1>
{{if .Subtitle}}<p class="sub">{{.Subtitle}}</p>{{end}}
{{range .Sections}}<section>
{{if .Heading}}<h2>{{.Heading}}</h2>{{end}}
{{range .Blocks}}{{.}}
{{end}}</section>
{{end}}</body>
</html>
`))

// Write writes the page as one HTML document with its style sheet and
// figures inline.
func (p *Page) Write(w io.Writer) error {
	type sec struct {
		Heading string
		Blocks  []template.HTML
	}
	data := struct {
		Title, Subtitle string
		CSS             template.CSS
		Sections        []sec
	}{Title: p.Title, Subtitle: p.Subtitle, CSS: template.CSS(pageCSS)}
	for _, s := range p.Sections {
		out := sec{Heading: s.Heading}
		for _, b := range s.Blocks {
			h, err := b.html()
			if err != nil {
				return fmt.Errorf("page %q: section %q: %w", p.Title, s.Heading, err)
			}
			out.Blocks = append(out.Blocks, h)
		}
		data.Sections = append(data.Sections, out)
	}
	return pageTmpl.Execute(w, data)
}
