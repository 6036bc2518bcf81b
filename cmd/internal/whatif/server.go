// Package whatif is the what-if page of `wearplan serve`: a small web
// server on this machine that re-plans a loaded scenario whenever a planner
// changes its yearly budget, cost escalation, targets or objective, and
// answers with the same tables and charts as the HTML report.
//
// The page (assets/, embedded) is plain HTML, CSS and JavaScript: no build
// step, no library, nothing fetched from anywhere else. Every change posts
// the full set of changes to /api/plan; the server lays them over the
// loaded scenario with scenarios.Editable (so they are checked exactly as
// the same keys in a file would be, and problems come back as the same
// Issues), plans with scenarios.PlanStaged and the scenarios.Options it was given
// (so a faster engine plugs in without changes here), and answers with
// report fragments (report.RunPanel: charts drawn on the server by the
// reports' own chart code), plain-words shortfalls and the figures a
// side-by-side comparison needs. The page asks for that answer in two
// parts (NDJSON): the plan first, then the plan with its funding answers,
// which take several more solves. Kept alternatives live in the page, not
// on the server; /api/download turns one of them into a scenario file or a
// report, or several into a comparison report.
//
// The server holds no state that requests change except a bounded memo of
// recent plans and one of the funding answers that do not depend on the
// budget (solve.go), each guarded by a mutex; identical requests share one
// solve. It reads no file after start-up.
package whatif

import (
	"context"
	"embed"
	"encoding/json"
	"errors"
	"fmt"
	"html/template"
	"io"
	"log"
	"mime"
	"net"
	"net/http"
	"runtime"
	"strconv"
	"strings"
	"time"

	"wearplan/cmd/internal/report"
	"wearplan/optimize"
	"wearplan/scenarios"
)

//go:embed assets
var assets embed.FS

// Source is one scenario the page offers.
type Source struct {
	// Path is the file as given on the command line; the page and the run
	// details of reports show it.
	Path string
	// Scenario is the loaded scenario.
	Scenario *scenarios.Editable
	// warm holds the policies of the scenario's own plan, solved once at
	// start-up: every request starts from a copy of it (optimize.Warm), so
	// that an answer depends on the request alone, not on the requests
	// before it. nil when that plan failed or was solved flat.
	warm *optimize.Warm
}

// Options configure a Server.
type Options struct {
	// Plan is passed to scenarios.Plan for every solve. Its Timeout also
	// bounds how long a request waits for its plan.
	Plan scenarios.Options
	// Version is the wearplan version shown on the page and in reports.
	Version string
	// Hosts are host names, besides localhost and IP addresses, that
	// requests may name in their Host header (the name given to --addr).
	Hosts []string
	// Log receives one line per failed request and solve; nil discards.
	Log io.Writer
	// Now gives the date of downloaded reports; nil means time.Now.
	Now func() time.Time
	// MaxSolves bounds the solves running at once; 0 means one per CPU.
	MaxSolves int
	// MemoSize bounds the plans remembered for identical requests; 0
	// means 32.
	MemoSize int
}

// Limits of the API.
const (
	// maxBody bounds a request body: the changes of a few alternatives.
	maxBody = 64 << 10
	// MaxAlternatives bounds the alternatives of one comparison report.
	MaxAlternatives = 8
	defaultTimeout  = 30 * time.Second
)

// Server is the what-if page's HTTP handler.
type Server struct {
	sources []Source
	opt     Options
	log     *log.Logger
	sem     chan struct{}
	memo    *memo
	kept    *keptAnswers
	index   []byte
	palette []byte
	icon    []byte
	handler http.Handler
}

// New makes a Server for the sources, in the order given.
func New(sources []Source, opt Options) (*Server, error) {
	if len(sources) == 0 {
		return nil, errors.New("whatif: no scenarios to serve")
	}
	if opt.Plan.Timeout <= 0 {
		opt.Plan.Timeout = defaultTimeout
	}
	if opt.Now == nil {
		opt.Now = time.Now
	}
	if opt.MaxSolves <= 0 {
		opt.MaxSolves = max(runtime.GOMAXPROCS(0), 1)
	}
	if opt.MemoSize <= 0 {
		opt.MemoSize = 32
	}
	logw := opt.Log
	if logw == nil {
		logw = io.Discard
	}
	s := &Server{
		sources: sources,
		opt:     opt,
		log:     log.New(logw, "wearplan serve: ", log.LstdFlags),
		sem:     make(chan struct{}, opt.MaxSolves),
		memo:    newMemo(opt.MemoSize),
		kept:    newKeptAnswers(opt.MemoSize),
		palette: []byte(report.PaletteCSS()),
		icon:    iconSVG(report.Palette()),
	}
	for i := range s.sources {
		// The base plan's policies seed every request's decomposition.
		opt := s.opt.Plan
		opt.Warm = &optimize.Warm{}
		if _, err := scenarios.Plan(s.sources[i].Scenario.Scenario, opt); err == nil && opt.Warm.Policies() > 0 {
			s.sources[i].warm = opt.Warm
		}
	}
	page, err := template.ParseFS(assets, "assets/index.html")
	if err != nil {
		return nil, err
	}
	var b strings.Builder
	names := make([]string, len(sources))
	for i, src := range sources {
		names[i] = src.Scenario.Scenario.Name
	}
	if err := page.Execute(&b, struct {
		Version, Caution string
		Names            []string
	}{opt.Version, scenarios.Caution, names}); err != nil {
		return nil, err
	}
	s.index = []byte(b.String())

	mux := http.NewServeMux()
	mux.HandleFunc("GET /{$}", s.serveIndex)
	mux.HandleFunc("GET /static/{file}", s.serveStatic)
	mux.HandleFunc("GET /api/scenarios", s.serveScenarios)
	mux.HandleFunc("POST /api/plan", s.servePlan)
	mux.HandleFunc("POST /api/download", s.serveDownload)
	// Browsers send Sec-Fetch-Site and Origin: a page from another site
	// cannot post to this one, even with a form.
	s.handler = s.guard(http.NewCrossOriginProtection().Handler(mux))
	return s, nil
}

// ServeHTTP serves the page and its API.
func (s *Server) ServeHTTP(w http.ResponseWriter, r *http.Request) { s.handler.ServeHTTP(w, r) }

// contentPolicy lets the page load only its own script, styles and icon
// and talk only to this server. style-src-attr allows the style
// attributes of the server-drawn SVG charts; no inline script is allowed.
const contentPolicy = "default-src 'none'; script-src 'self'; style-src 'self'; style-src-attr 'unsafe-inline'; " +
	"img-src 'self'; connect-src 'self'; base-uri 'none'; form-action 'none'; frame-ancestors 'none'"

// guard sets the security headers of every response and refuses Host
// names this server does not answer to, so that a web page cannot reach it
// through a name of its own that resolves to this machine.
func (s *Server) guard(next http.Handler) http.Handler {
	return http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		h := w.Header()
		h.Set("Content-Security-Policy", contentPolicy)
		h.Set("X-Content-Type-Options", "nosniff")
		h.Set("X-Frame-Options", "DENY")
		h.Set("Referrer-Policy", "no-referrer")
		h.Set("Cross-Origin-Opener-Policy", "same-origin")
		h.Set("Cross-Origin-Resource-Policy", "same-origin")
		if !s.hostAllowed(r.Host) {
			http.Error(w, "unknown host name; open the address wearplan serve printed", http.StatusMisdirectedRequest)
			return
		}
		next.ServeHTTP(w, r)
	})
}

func (s *Server) hostAllowed(hostport string) bool {
	host := hostport
	if h, _, err := net.SplitHostPort(hostport); err == nil {
		host = h
	}
	host = strings.TrimSuffix(strings.TrimPrefix(host, "["), "]")
	if net.ParseIP(host) != nil || strings.EqualFold(host, "localhost") {
		return true
	}
	for _, h := range s.opt.Hosts {
		if strings.EqualFold(host, h) {
			return true
		}
	}
	return false
}

func (s *Server) serveIndex(w http.ResponseWriter, r *http.Request) {
	w.Header().Set("Content-Type", "text/html; charset=utf-8")
	w.Header().Set("Cache-Control", "no-cache")
	w.Write(s.index)
}

// static lists the files under /static/ and their types.
var static = map[string]string{
	"app.js":      "text/javascript; charset=utf-8",
	"app.css":     "text/css; charset=utf-8",
	"icon.svg":    "image/svg+xml",
	"report.css":  "text/css; charset=utf-8",
	"palette.css": "text/css; charset=utf-8",
}

func (s *Server) serveStatic(w http.ResponseWriter, r *http.Request) {
	name := r.PathValue("file")
	typ, ok := static[name]
	if !ok {
		http.NotFound(w, r)
		return
	}
	var body []byte
	switch name {
	case "report.css":
		body = report.Stylesheet()
	case "palette.css":
		body = s.palette
	case "icon.svg":
		body = s.icon
	default:
		var err error
		if body, err = assets.ReadFile("assets/" + name); err != nil {
			http.NotFound(w, r)
			return
		}
	}
	w.Header().Set("Content-Type", typ)
	w.Header().Set("Cache-Control", "no-cache")
	w.Write(body)
}

// scenarioInfo is what the page needs to draw its controls for a scenario.
type scenarioInfo struct {
	ID        int       `json:"id"`
	Path      string    `json:"path"`
	Name      string    `json:"name"`
	Currency  string    `json:"currency"`
	StartYear int       `json:"start_year"`
	Horizon   int       `json:"horizon"`
	Budget    []float64 `json:"budget"`
	// BudgetMax and BudgetStep suggest the range of the budget slider.
	BudgetMax    float64     `json:"budget_max"`
	BudgetStep   float64     `json:"budget_step"`
	BudgetGroups []string    `json:"budget_groups"`
	Classes      []classInfo `json:"classes"`
	// NetworkIndex says whether a network min_average_index target makes
	// sense (every class on one scale).
	NetworkIndex bool              `json:"network_index"`
	Settings     scenarios.Changes `json:"settings"`
}

type classInfo struct {
	Name          string  `json:"name"`
	Unit          string  `json:"unit"`
	Scale         string  `json:"scale"`
	IndexLow      float64 `json:"index_low"`
	IndexHigh     float64 `json:"index_high"`
	LowerIsBetter bool    `json:"lower_is_better"`
	// Pieces says what the class moves as in the bands when the page sets
	// no piece size: its segment list's segments or its unit's default.
	Pieces string `json:"pieces"`
	// States are the scale's condition states, best first, for targets
	// on one state.
	States []string `json:"states"`
}

func (s *Server) serveScenarios(w http.ResponseWriter, r *http.Request) {
	out := make([]scenarioInfo, len(s.sources))
	for i, src := range s.sources {
		sc := src.Scenario.Scenario
		info := scenarioInfo{ID: i, Path: src.Path, Name: sc.Name, Currency: sc.Currency, StartYear: sc.StartYear, Horizon: sc.Horizon,
			Budget: sc.Budget, BudgetGroups: []string{}, NetworkIndex: sc.SharedScale() != nil, Settings: src.Scenario.Current()}
		info.BudgetMax, info.BudgetStep = budgetRange(sc)
		for _, g := range sc.BudgetGroups {
			info.BudgetGroups = append(info.BudgetGroups, g.Name)
		}
		for k := range sc.Classes {
			c := &sc.Classes[k]
			ci := classInfo{Name: c.Name, Unit: c.Unit, Scale: strings.TrimPrefix(c.Scale.Name, scenarios.PresetPrefix),
				IndexLow: min(c.Scale.Best, c.Scale.Worst), IndexHigh: max(c.Scale.Best, c.Scale.Worst), LowerIsBetter: c.Scale.Best < c.Scale.Worst,
				Pieces: defaultPieces(c)}
			for _, st := range c.Scale.States {
				ci.States = append(ci.States, st.Name)
			}
			info.Classes = append(info.Classes, ci)
		}
		out[i] = info
	}
	writeJSON(w, http.StatusOK, out)
}

// defaultPieces says what a class moves as in a simulation without a
// piece size of its own: its segment list's segments, or its unit's
// default piece.
func defaultPieces(c *scenarios.Class) string {
	if len(c.Segments) > 0 {
		return fmt.Sprintf("%d segments", len(c.Segments))
	}
	size, _ := scenarios.DefaultSegmentSize(c.Unit, c.Initial)
	return fmt.Sprintf("default %s", strconv.FormatFloat(size, 'f', -1, 64))
}

// budgetRange suggests the budget slider's top and step: twice the
// largest yearly budget of the file, or without one a twentieth of the
// network's replacement value (or 10 million when that is unknown), in
// steps of about a hundredth of the file's budget, rounded to 1, 2 or 5
// times a power of ten.
func budgetRange(sc *scenarios.Scenario) (top, step float64) {
	base := 0.0
	for _, b := range sc.Budget {
		base = max(base, b)
	}
	if base == 0 {
		for k := range sc.Classes {
			base += sc.Classes[k].ReplacementCost * sc.Classes[k].Total() / 40
		}
	}
	if base == 0 {
		base = 5e6
	}
	step = niceStep(base / 100)
	top = step * float64(int(2*base/step+0.5))
	return top, step
}

func niceStep(v float64) float64 {
	p := 1.0
	for p*10 <= v {
		p *= 10
	}
	for p > v && p > 1 {
		p /= 10
	}
	for _, m := range []float64{5, 2, 1} {
		if m*p <= v {
			return m * p
		}
	}
	return p
}

// apiError is the body of every error answer: a plain message and, for
// problems with the input, the same Issues the command line prints.
type apiError struct {
	status  int
	Message string      `json:"error"`
	Issues  []issueJSON `json:"issues,omitempty"`
}

type issueJSON struct {
	File    string `json:"file"`
	Line    int    `json:"line,omitempty"`
	Field   string `json:"field,omitempty"`
	Message string `json:"message"`
	Text    string `json:"text"`
}

func inputProblems(ie *scenarios.InputError) *apiError {
	e := &apiError{status: http.StatusUnprocessableEntity, Message: "These changes cannot be planned; fix the problems listed."}
	for _, is := range ie.Issues {
		e.Issues = append(e.Issues, issueJSON{File: is.File, Line: is.Line, Field: is.Field, Message: is.Msg, Text: is.Error()})
	}
	return e
}

func requestProblem(status int, format string, args ...any) *apiError {
	return &apiError{status: status, Message: fmt.Sprintf(format, args...)}
}

func (s *Server) fail(w http.ResponseWriter, r *http.Request, e *apiError) {
	if e.status >= 500 {
		s.log.Printf("%s %s: %s", r.Method, r.URL.Path, e.Message)
	}
	writeJSON(w, e.status, e)
}

func writeJSON(w http.ResponseWriter, status int, v any) {
	b, err := json.Marshal(v)
	if err != nil {
		http.Error(w, "cannot write the answer", http.StatusInternalServerError)
		return
	}
	w.Header().Set("Content-Type", "application/json; charset=utf-8")
	w.Header().Set("Cache-Control", "no-store")
	w.WriteHeader(status)
	w.Write(b)
}

// decodeBody reads a JSON request body of at most maxBody bytes into v,
// strictly: unknown fields, trailing data and wrong types are errors.
func decodeBody(w http.ResponseWriter, r *http.Request, v any) *apiError {
	if mt, _, err := mime.ParseMediaType(r.Header.Get("Content-Type")); err != nil || mt != "application/json" {
		return requestProblem(http.StatusUnsupportedMediaType, "send the request as application/json")
	}
	dec := json.NewDecoder(http.MaxBytesReader(w, r.Body, maxBody))
	dec.DisallowUnknownFields()
	err := dec.Decode(v)
	if err == nil {
		if dec.Decode(&struct{}{}) != io.EOF {
			return requestProblem(http.StatusBadRequest, "the request holds more than one JSON value")
		}
		return nil
	}
	var tooBig *http.MaxBytesError
	var typeErr *json.UnmarshalTypeError
	var syntax *json.SyntaxError
	switch {
	case errors.As(err, &tooBig):
		return requestProblem(http.StatusRequestEntityTooLarge, "the request is larger than %d bytes", maxBody)
	case errors.As(err, &typeErr):
		return requestProblem(http.StatusBadRequest, "%s: want %s, got a JSON %s", typeErr.Field, typeErr.Type, typeErr.Value)
	case errors.As(err, &syntax), errors.Is(err, io.ErrUnexpectedEOF), errors.Is(err, io.EOF):
		return requestProblem(http.StatusBadRequest, "the request is not valid JSON")
	default:
		// Unknown fields and the like.
		return requestProblem(http.StatusBadRequest, "%s", strings.TrimPrefix(err.Error(), "json: "))
	}
}

// alternative is one set of changes to one of the scenarios.
type alternative struct {
	Scenario int               `json:"scenario"`
	Changes  scenarios.Changes `json:"changes"`
	// Bands asks for the uncertainty bands of the plan (BandRuns simulated
	// runs, seed 1): scenarios.Simulate, drawn as the reports draw them.
	Bands bool `json:"bands,omitempty"`
}

func (s *Server) source(id int) (*Source, *apiError) {
	if id < 0 || id >= len(s.sources) {
		return nil, requestProblem(http.StatusBadRequest, "scenario %d: the server has scenarios 0 to %d", id, len(s.sources)-1)
	}
	return &s.sources[id], nil
}

// iconSVG draws the page's icon: three bars in the condition colours of
// the reports' network chart, best on top.
func iconSVG(c report.Colours) []byte {
	return []byte(fmt.Sprintf(`<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 32 32">`+
		`<rect x="2" y="2" width="28" height="28" fill="%s" stroke="%s" stroke-width="2"/>`+
		`<rect x="3" y="12" width="26" height="9" fill="%s"/><rect x="3" y="21" width="26" height="8" fill="%s"/></svg>`,
		c.Good, c.Ink, c.Fair, c.Poor))
}

// Serve answers on ln until ctx ends (Ctrl-C), then stops taking requests,
// calls off those still waiting for a plan, and returns when they have
// answered (at most a few seconds later).
func (s *Server) Serve(ctx context.Context, ln net.Listener) error {
	srv := &http.Server{
		Handler:           s,
		ReadHeaderTimeout: 10 * time.Second,
		ReadTimeout:       30 * time.Second,
		// A download may plan MaxAlternatives alternatives one by one.
		WriteTimeout:   (MaxAlternatives + 1) * (s.opt.Plan.Timeout + 5*time.Second),
		IdleTimeout:    2 * time.Minute,
		MaxHeaderBytes: 64 << 10,
		BaseContext:    func(net.Listener) context.Context { return ctx },
		ErrorLog:       s.log,
	}
	done := make(chan error, 1)
	go func() { done <- srv.Serve(ln) }()
	select {
	case err := <-done:
		return err
	case <-ctx.Done():
	}
	grace, cancel := context.WithTimeout(context.Background(), 5*time.Second)
	defer cancel()
	if err := srv.Shutdown(grace); err != nil {
		srv.Close()
	}
	if err := <-done; err != nil && !errors.Is(err, http.ErrServerClosed) {
		return err
	}
	return nil
}
