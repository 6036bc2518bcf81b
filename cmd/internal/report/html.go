package report

import (
	"bytes"
	"embed"
	"html/template"
	"io"
	"sync"
)

//go:embed templates/report.html templates/report.css
var templates embed.FS

// htmlTemplate is parsed on first use: commands that write no HTML
// (check, forecast, --version) do not pay for it at start-up.
var htmlTemplate = sync.OnceValue(func() *template.Template {
	return template.Must(template.ParseFS(templates, "templates/report.html"))
})

// HTML writes the report as one self-contained HTML page: inline CSS and
// inline SVG charts, no scripts, and a content security policy that lets
// the page load nothing from anywhere, so it opens offline and prints.
func HTML(w io.Writer, rep *Report) error {
	d, err := build(rep, true)
	if err != nil {
		return err
	}
	css, err := templates.ReadFile("templates/report.css")
	if err != nil {
		return err
	}
	data := struct {
		Doc     *document
		CSS     template.CSS
		Version string
		Date    string
	}{d, template.CSS(css), rep.Details.Version, rep.Details.Date}
	// Render to memory first so that a template error writes nothing.
	var buf bytes.Buffer
	if err := htmlTemplate().Execute(&buf, data); err != nil {
		return err
	}
	_, err = buf.WriteTo(w)
	return err
}
