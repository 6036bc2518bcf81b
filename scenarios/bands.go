package scenarios

// SimulationResult holds the uncertainty bands of a simulated plan or
// forecast: per class and network, per year, percentiles over the runs of
// each group's share, of the average index and of spend, and per target and
// year the probability that it is met. Shares are fractions (0-1); money is
// nominal in the scenario's currency.
type SimulationResult struct {
	Scenario string `json:"scenario"`
	Source   string `json:"source"`
	Kind     Kind   `json:"kind"` // KindSimulation
	// Policy is what the runs follow: "plan" or "do-nothing"; PlanStatus
	// is the status of the plan followed.
	Policy     string `json:"policy"`
	PlanStatus Status `json:"plan_status,omitempty"`
	Currency   string `json:"currency"`
	StartYear  int    `json:"start_year"`
	Horizon    int    `json:"horizon"`
	Runs       int    `json:"runs"`
	Seed       uint64 `json:"seed"`
	// Percentiles defines p5, p50 and p95.
	Percentiles string      `json:"percentiles"`
	Uncertainty Uncertainty `json:"uncertainty"`
	// PolicyRule says how a run decides each segment's treatment.
	PolicyRule string         `json:"policy_rule,omitempty"`
	Weighting  string         `json:"network_weighting"`
	Classes    []SimClassInfo `json:"classes"`
	// Initial is today's condition (the same in every run).
	Initial  Snapshot       `json:"initial"`
	Years    []BandYear     `json:"years"`
	Targets  []TargetChance `json:"targets"`
	Warnings []string       `json:"warnings"`
	Caution  string         `json:"caution"`
}

// Uncertainty says which sources of uncertainty the bands include.
type Uncertainty struct {
	// Segments is true: every run moves each segment at random.
	Segments bool `json:"segments"`
	// Matrix is MatrixNone, MatrixDirichlet or MatrixBootstrap.
	Matrix string `json:"matrix"`
	// Included and Excluded describe the sources in plain words.
	Included []string `json:"included"`
	Excluded []string `json:"not_included"`
}

// SimClassInfo describes how a class was simulated.
type SimClassInfo struct {
	Class string `json:"class"`
	Unit  string `json:"unit"`
	// Segments is the number of segments or lots; Quantity their total.
	Segments int     `json:"segments"`
	Quantity float64 `json:"quantity"`
	// LotSize is the size of the pieces cut from the quantities (0 when
	// the segments came from an inventory list); PieceRule says what chose
	// it.
	LotSize   float64 `json:"lot_size,omitempty"`
	PieceRule string  `json:"piece_rule,omitempty"`
	// SegmentsFrom says where the segments came from.
	SegmentsFrom string `json:"segments_from"`
	// Matrix is how each run got the class's matrix: "as given" or the
	// sampling distribution.
	Matrix string `json:"matrix"`
	// BorrowedShares counts the (year, state) pairs where the plan had no
	// quantity and the runs use another year's shares; Untreated those
	// where no year has any and segments are left untreated.
	BorrowedShares int `json:"borrowed_shares"`
	Untreated      int `json:"untreated_states"`
}

// Band is the distribution of one figure over the runs.
type Band struct {
	P5   float64 `json:"p5"`
	P50  float64 `json:"p50"`
	P95  float64 `json:"p95"`
	Mean float64 `json:"mean"`
	// Plan is the deterministic value (the plan's or forecast's flow).
	Plan float64 `json:"plan"`
}

// ShareBands are the bands of the level-of-service group shares.
type ShareBands struct {
	Good Band `json:"good"`
	Fair Band `json:"fair"`
	Poor Band `json:"poor"`
}

// ClassBands are one class's bands at the end of a year.
type ClassBands struct {
	Class        string     `json:"class"`
	Shares       ShareBands `json:"shares"`
	AverageIndex Band       `json:"average_index"`
	Score        Band       `json:"score"`
	// Spend is the year's treatment spend (plans only).
	Spend *Band `json:"spend,omitempty"`
}

// NetworkBands are the network's bands at the end of a year. AverageIndex
// is present only when every class uses the same scale.
type NetworkBands struct {
	Shares       ShareBands `json:"shares"`
	AverageIndex *Band      `json:"average_index,omitempty"`
	Score        Band       `json:"score"`
	Spend        *Band      `json:"spend,omitempty"`
}

// BandYear is one simulated year.
type BandYear struct {
	Year    int          `json:"year"`
	Budget  *float64     `json:"budget"`
	Classes []ClassBands `json:"classes"`
	Network NetworkBands `json:"network"`
}

// TargetChance is how likely a target is to hold.
type TargetChance struct {
	Target string `json:"target"`
	// MetByPlan is whether the deterministic plan (or forecast) meets it.
	MetByPlan bool `json:"met_by_plan"`
	// AllYears is the share of runs in which it holds in every year it
	// covers.
	AllYears float64      `json:"probability_all_years"`
	Years    []YearChance `json:"years"`
}

// YearChance is the share of runs in which a target holds in one year.
type YearChance struct {
	Year        int     `json:"year"`
	Probability float64 `json:"probability"`
}
