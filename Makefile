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

.PHONY: demo serve test check-long build deps deps-test deps-bench bench bench-go clean

deps:
	@dpkg -s liblpsolve55-dev >/dev/null 2>&1 || { echo "installing liblpsolve55-dev"; $(call apt_install,liblpsolve55-dev); }

deps-test: deps
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
	go test ./...
	go test -race -run 'Concurrent|Memo|Serve|TimeLimit' ./cmd/internal/whatif/

# The optimizer's agreement with glpsol on all 300 generated scenarios
# (make test checks a fixed sample of them), with the load test on the same
# set: a few minutes on 2 cores.
check-long: deps-test
	WEARPLAN_LONG=1 go test -timeout 60m -run 'TestAgreesWithGLPKOnGeneratedScenarios|TestAnswersDoNotDependOnLoad' ./optimize/

deps-bench: deps-test
	@command -v lp_solve >/dev/null 2>&1 || { echo "installing lp-solve"; $(call apt_install,lp-solve); }

# One table: wearplan (decomposed and flat) and the peers (glpsol simplex and
# interior point, clp barrier, the lp_solve CLI) on the same generated
# models, then a 20-point budget sweep. BENCH_FLAGS="-timeout 30s -reps 5".
bench: deps-bench
	go run ./optimize/internal/benchtable $(BENCH_FLAGS)

# Go micro-benchmarks (model build, flat and decomposed solves).
bench-go: deps-test
	go test -run '^$$' -bench . -benchmem ./...

clean:
	rm -rf bin
