# wearplan build, demo and tests. lp_solve 5.5 comes from Debian's
# liblpsolve55-dev (a static library) and is linked through golp with cgo;
# GLPK's glpsol (glpk-utils) and COIN-OR's clp (coinor-clp) are the
# independent reference solvers in tests; Debian's chromium (with the
# Liberation fonts the report charts are measured in) opens the HTML report
# in the browser test.
SHELL := /bin/bash
export PATH := $(PATH):/usr/local/go/bin
export CGO_ENABLED := 1
export CGO_CFLAGS := -I/usr/include/lpsolve
export CGO_LDFLAGS := -llpsolve55 -lm -ldl -lcolamd

DEMO := scenarios/examples/marrowby.yaml
SUDO := $(shell [ "$$(id -u)" = 0 ] || echo sudo)

# apt_install PACKAGES: install Debian packages, refreshing the package
# lists only when the first attempt fails (fresh machines have none).
define apt_install
$(SUDO) env DEBIAN_FRONTEND=noninteractive apt-get install -y -q --no-install-recommends $(1) >/dev/null 2>&1 || \
  { $(SUDO) apt-get update -q >/dev/null && $(SUDO) env DEBIAN_FRONTEND=noninteractive apt-get install -y -q --no-install-recommends $(1); }
endef

.PHONY: demo serve test check-long build deps deps-test deps-bench bench bench-scale bench-go bench-fit fuzz clean

deps:
	@dpkg -s liblpsolve55-dev >/dev/null 2>&1 || { echo "installing liblpsolve55-dev"; $(call apt_install,liblpsolve55-dev); }

# staticcheck at a pinned version, built from the Go module proxy into
# bin/tools (ignored by git) on first use.
STATICCHECK_VERSION := v0.8.2
STATICCHECK := bin/tools/staticcheck-$(STATICCHECK_VERSION)

$(STATICCHECK):
	@echo "installing staticcheck $(STATICCHECK_VERSION)"
	@mkdir -p bin/tools
	GOBIN=$(CURDIR)/bin/tools go install honnef.co/go/tools/cmd/staticcheck@$(STATICCHECK_VERSION)
	mv bin/tools/staticcheck $@

deps-test: deps $(STATICCHECK)
	@command -v glpsol >/dev/null 2>&1 || { echo "installing glpk-utils"; $(call apt_install,glpk-utils); }
	@command -v clp >/dev/null 2>&1 || { echo "installing coinor-clp"; $(call apt_install,coinor-clp); }
	@command -v chromium >/dev/null 2>&1 && dpkg -s fonts-liberation >/dev/null 2>&1 || { echo "installing chromium and fonts-liberation"; $(call apt_install,chromium fonts-liberation); }

build: deps
	go build -o bin/wearplan ./cmd/wearplan

demo: build
	./bin/wearplan plan $(DEMO)

# The what-if page for the demo, on http://127.0.0.1:8321/ (Ctrl-C stops it).
serve: build
	./bin/wearplan serve $(DEMO)

# The race detector runs on the what-if server's concurrency tests (cgo
# works with -race: lp_solve is not instrumented, the Go around it is). Its
# first run compiles a race build of the dependencies (a minute or two on a
# fresh machine); after that it takes a few seconds.
test: deps-test
	go vet ./...
	$(STATICCHECK) ./...
	go test ./...
	go test -race -run 'Concurrent|Memo|Serve|TimeLimit' ./cmd/internal/whatif/
	@$(MAKE) --no-print-directory fuzz FUZZ_SCALE=

# Go fuzz tests of every reader of user files (scenarios/fuzz_test.go).
# `make test` runs each briefly (a few seconds); `make fuzz` a hundred times
# longer. Budgets are counts of inputs, not durations: a duration races the
# fuzz coordinator's deadline on a loaded machine (golang/go#75804). An
# input that fails is kept in scenarios/testdata/fuzz/ and then runs as a
# plain test case.
FUZZ_TARGETS := FuzzLoadScenario:2000 FuzzSegmentList:3000 FuzzInspections:10000 FuzzFitFile:3000 FuzzWhatIfChanges:1000
FUZZ_SCALE ?= 00
fuzz: deps-test
	@for spec in $(FUZZ_TARGETS); do \
	  name=$${spec%%:*}; n=$${spec##*:}$(FUZZ_SCALE); \
	  echo "go test -run '^$$' -fuzz '^$$name$$' -fuzztime $${n}x ./scenarios"; \
	  go test -run '^$$' -fuzz "^$$name\$$" -fuzztime $${n}x ./scenarios || exit 1; \
	done

# The optimizer's agreement with glpsol on all 300 generated scenarios
# (make test checks a fixed sample of them), with the load test on the same
# set: a few minutes on 2 cores.
check-long: deps-test
	WEARPLAN_LONG=1 go test -timeout 60m -run 'TestAgreesWithGLPKOnGeneratedScenarios|TestAnswersDoNotDependOnLoad' ./optimize/

# GNU time measures each benchmarked process's peak memory (benchtable).
deps-bench: deps-test
	@command -v lp_solve >/dev/null 2>&1 || { echo "installing lp-solve"; $(call apt_install,lp-solve); }
	@[ -x /usr/bin/time ] || { echo "installing time"; $(call apt_install,time); }

# One table of whole processes, as a user times wearplan: each generated
# model (20x7x6x30 and 60x10x8x40, from optimize.Generate and from its
# catalogue shape, GenSpec.Catalogue) written as a scenario file and planned
# by bin/wearplan (built once) with `plan --format json`, fastest and median
# of 3 runs and peak memory, beside the solve in process; the peers (glpsol
# simplex and interior point, clp barrier, the lp_solve CLI) on the MPS that
# `plan --write-model` exports, each process with a 60 s limit. Then a
# 50-budget `sweep` of 20x7x6x30 and of 60x10x8x40, each as one process
# (120 s limit), its lowest, middle and highest points checked against
# glpsol --interior. About 8 minutes on 2 cores. BENCH_FLAGS="-timeout 30s -reps 5".
# Then the simulations: 1,000 runs of the trial network (4 classes, about
# 200,000 units, 15 years) and of the demo with their default pieces, and
# the what-if page's bands for the demo (200 runs), each with its median
# wall time and peak resident memory; and the what-if page's budget cuts
# (15 budgets from 3.0 to 5.5 million, the plan part first).
bench: deps-bench
	go run ./optimize/internal/benchtable $(BENCH_FLAGS)
	go test -run '^$$' -bench 'SimulateDefaultPieces' -benchtime 5x ./scenarios/
	go test -run '^$$' -bench 'PlanRequest/(bands|cuts-parts)' -benchtime 10x ./cmd/internal/whatif/

# Past state-wide: whole `plan` processes on 50, 100, 200 and 1,000 classes
# x 10 states x 8 treatments x 40 years, and on 100 classes with 6 and 14
# states and 20 and 80 years, 5 seeds each, one run per seed with a 120 s
# limit (a run past it shows as "> 120 s"); then the growth exponents in
# classes, states and years (least squares on the logarithms).
# BENCH_SCALE_FLAGS="-big" adds 500 classes, "-catalogue" uses the catalogue
# generator, "-seeds 3" fewer seeds. 15-30 minutes on 2 cores, longer while
# the largest sizes run to the limit.
bench-scale: deps-bench
	go run ./optimize/internal/benchtable -scale $(BENCH_SCALE_FLAGS)

# Go micro-benchmarks (model build, flat and decomposed solves).
bench-go: deps-test
	go test -run '^$$' -bench . -benchmem ./...

# wearplan fit on a generated export of 1,000,000 inspection rows with two
# covariates (the ordered logit model of the yearly drop besides the
# matrix), without and with the default 1,000 bootstrap resamples; each in
# its own process so that its peak memory is its own. Target: under 30 s
# and 1 GiB on 2 cores (docs/benchmarks.md).
bench-fit: deps-test
	go test -run '^$$' -bench 'BenchmarkFit/counting/1000000/bootstrap=0/covariates' -benchtime 3x ./scenarios/
	go test -run '^$$' -bench 'BenchmarkFit/counting/1000000/bootstrap=1000/covariates' -benchtime 3x ./scenarios/

clean:
	rm -rf bin
