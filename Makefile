# Kinetarium: the two commands a new user needs are `make run` and `make test`.
GO ?= go
MODEL ?=

.PHONY: run test deps test-deps fmt-check vet unit screenshot-check render-check bench bench-fit fuzz build batch clean conformance test-stochastic cvode-compare cvode-compare-large large-networks probes

run: deps
	$(GO) run ./app $(if $(MODEL),--model $(MODEL))

build: deps
	$(GO) build -o bin/kinetarium ./app
	CGO_ENABLED=0 $(GO) build -o bin/kinetarium-batch ./app/batch

batch:
	CGO_ENABLED=0 $(GO) build -o bin/kinetarium-batch ./app/batch

deps:
	@scripts/ensure-deps.sh

test-deps:
	@scripts/ensure-deps.sh --test

test: test-deps fmt-check vet unit screenshot-check

fmt-check:
	@out=$$(gofmt -l $$(git ls-files '*.go' 2>/dev/null || find . -name '*.go')); \
	if [ -n "$$out" ]; then echo "gofmt needed on:"; echo "$$out"; exit 1; fi

vet:
	$(GO) vet ./...

unit:
	$(GO) test ./...

screenshot-check:
	app/screenshot_check.sh

# Exported SVG and PDF figures rendered by headless Chromium and poppler
# with the system's fonts hidden, against the PNG export (also part of
# `make unit` when Chromium is installed; skipped with a message if not).
render-check: test-deps
	$(GO) test ./plotting -run 'Rendering|PDFText|Metadata' -count=1 -v

# The statistical tests of the stochastic methods in their full form:
# n = 10,000 runs per ensemble instead of the 1,000 of `make test`
# (about 3 s).
test-stochastic:
	STOCHASTIC_FULL=1 $(GO) test -count=1 -v ./solve/stochastic -run 'Moments|Poisson|TimedEvent'
	$(GO) test -count=1 -v ./app/ensemble -run LargeVolume

# Issue 17's probes in their full form (300 kills during saves instead of
# 30) and the table of every hostile-input probe (bench/robustness.md).
probes:
	KINETARIUM_PROBES=full $(GO) test -count=1 -v ./internal/atomicfile -run Kills
	$(GO) test -count=1 ./app/batch -run HostileInputProbes -probe-report $(CURDIR)/bench/robustness-probes.md

# Work-precision report and the benchmarks of every package.
bench:
	$(GO) test -run '^$$' -bench . -benchmem ./network/... ./solve/... ./plotting/... ./app/ensemble ./app/diagram
	$(GO) test -run '^$$' -bench . -benchtime 1x ./app/analyse
	$(GO) run ./internal/workprecision -out bench

# Kinetarium against SUNDIALS CVODE, dense and KLU, at equal accuracy
# (bench/cvode-comparison.md), and the 200- and 1,000-species solves by
# stage beside CVODE–KLU's counters (bench/solve-stages.md and the CPU
# profiles bench/profile-net*.pprof). Sets CVODE up with
# scripts/install-sundials.sh (as root) when it is missing. Sizes of the
# generated networks: make cvode-compare CVODE_SIZES=200,1000,5000
# (networks with feedback: CVODE_FLAGS=-feedback-sizes=1000)
CVODE_SIZES ?= 200,1000
CVODE_FLAGS ?=
cvode-compare:
	@[ -e /opt/sundials-dev/lib/libsundials_sunlinsolklu.so ] || scripts/install-sundials.sh
	$(GO) test -tags sundials -count=1 ./internal/cvodecmp/...
	$(GO) run -tags sundials ./internal/cvodecmp/cmd -sizes $(CVODE_SIZES) -out bench/cvode-comparison.md -profile bench/solve-stages.md $(CVODE_FLAGS)

# The generated networks of 5,000 and 20,000 species (and 5,000 with
# feedback) against CVODE–KLU, down to rtol 1e-11 so that both reach 7
# correct digits: bench/cvode-comparison-large.md (about 15 minutes).
cvode-compare-large:
	@[ -e /opt/sundials-dev/lib/libsundials_sunlinsolklu.so ] || scripts/install-sundials.sh
	$(GO) run -tags sundials ./internal/cvodecmp/cmd -problems "" -sizes 5000,20000 -feedback-sizes 5000 -methods auto -rtols 1e-4,1e-5,1e-6,1e-7,1e-8,1e-9,1e-10,1e-11 -repeat 2 -profile "" -out bench/cvode-comparison-large.md

# Each stage of a run (read, check, compile, solve, write, conservation
# laws) on the generated networks of 50 to 20,000 species, with time and
# peak memory: bench/large-networks.md. Each model runs in its own
# process, stopped after LARGE_LIMIT or at 8 GB.
LARGE_LIMIT ?= 5m
large-networks:
	$(GO) run ./internal/largenet -limit $(LARGE_LIMIT) -out bench/large-networks.md

# The fitting benchmark (bench/fit.md): the protease fit by sensitivities
# and by differences, one start and 20, and the same fit by SciPy's
# least_squares on solve_ivp (scripts/protease_fit_peer.py, Debian's
# python3-scipy) in the same run; about 5 minutes.
bench-fit:
	$(GO) run ./internal/fitbench -out bench

FUZZTIME ?= 30s
fuzz:
	$(GO) test ./network/expr -run '^$$' -fuzz FuzzParse -fuzztime $(FUZZTIME)
	$(GO) test ./network/units -run '^$$' -fuzz FuzzParse -fuzztime $(FUZZTIME)
	$(GO) test ./network -run '^$$' -fuzz FuzzParseEquation -fuzztime $(FUZZTIME)
	$(GO) test ./network -run '^$$' -fuzz 'FuzzRead$$' -fuzztime $(FUZZTIME)
	$(GO) test ./network -run '^$$' -fuzz FuzzLayout -fuzztime $(FUZZTIME)
	$(GO) test ./network -run '^$$' -fuzz FuzzJSONTree -fuzztime $(FUZZTIME)
	$(GO) test ./plotting -run '^$$' -fuzz FuzzReadPNGText -fuzztime $(FUZZTIME)
	$(GO) test ./plotting -run '^$$' -fuzz FuzzSVGMetadata -fuzztime $(FUZZTIME)
	$(GO) test ./app/run -run '^$$' -fuzz FuzzReadProvenance -fuzztime $(FUZZTIME)
	$(GO) test ./network/expr -run '^$$' -fuzz FuzzCompile -fuzztime $(FUZZTIME)
	$(GO) test ./network -run '^$$' -fuzz FuzzOutputTimes -fuzztime $(FUZZTIME)
	$(GO) test ./solve -run '^$$' -fuzz FuzzSparseLU -fuzztime $(FUZZTIME)
	$(GO) test ./app/batch -run '^$$' -fuzz FuzzSweepSpec -fuzztime $(FUZZTIME)
	$(GO) test ./app/batch -run '^$$' -fuzz FuzzPopulationSpec -fuzztime $(FUZZTIME)
	$(GO) test ./app/batch -run '^$$' -fuzz FuzzMergePart -fuzztime $(FUZZTIME)
	$(GO) test ./solve/explore -run '^$$' -fuzz FuzzDecodeJSON -fuzztime $(FUZZTIME)
	$(GO) test ./network/sbml -run '^$$' -fuzz FuzzRead -fuzztime $(FUZZTIME)
	$(GO) test ./network/sbml -run '^$$' -fuzz FuzzMathML -fuzztime $(FUZZTIME)
	$(GO) test ./app/calibrate -run '^$$' -fuzz FuzzReadCompanion -fuzztime $(FUZZTIME)
	$(GO) test ./app/calibrate -run '^$$' -fuzz FuzzReadData -fuzztime $(FUZZTIME)
	$(GO) test ./app/calibrate -run '^$$' -fuzz FuzzReadSpec -fuzztime $(FUZZTIME)
	$(GO) test ./solve/stochastic -run '^$$' -fuzz FuzzReadJSON -fuzztime $(FUZZTIME)
	$(GO) test ./app/batch -run '^$$' -fuzz FuzzContinuationSpec -fuzztime $(FUZZTIME)
	$(GO) test ./app/batch -run '^$$' -fuzz FuzzSensitivitySpec -fuzztime $(FUZZTIME)

# Every case of the SBML Test Suite (make test runs every third): the
# report and its summary by tag, from ../shared/reference/sbml-test-suite.
SBML_SUITE ?= ../shared/reference/sbml-test-suite/cases
conformance:
	SBML_CONFORMANCE=full $(GO) test ./app/conformance -run 'TestConformance$$' -count=1 -v
	$(GO) run ./app/batch conformance $(SBML_SUITE) --out bench/sbml-conformance.csv --summary bench/sbml-conformance-summary.md --quiet

clean:
	rm -rf bin
