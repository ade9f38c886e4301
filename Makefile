# Thin wrapper over CMake and CTest; all build logic lives in CMakeLists.txt.
BUILD ?= build-release
JOBS ?= $(shell nproc)
CMAKE_FLAGS ?=

.PHONY: deps configure build demo test test-sanitize test-tsan fuzz bench clean

deps:
	@bash .ci/install-deps

configure: deps
	@cmake -S . -B $(BUILD) -G Ninja -DCMAKE_BUILD_TYPE=Release $(CMAKE_FLAGS) >/dev/null

build: configure
	@cmake --build $(BUILD) -j $(JOBS)

demo: build
	@$(BUILD)/bindings/cli/disc run netlists/table-radio-half-wave.disc -o out/table-radio-half-wave

test: build
	@cd $(BUILD) && ctest --output-on-failure -j $(JOBS)

# The C++ tests again under AddressSanitizer and UndefinedBehaviorSanitizer (CI runs this too).
test-sanitize: deps
	@cmake -S . -B build-asan -G Ninja -DCMAKE_BUILD_TYPE=Debug -DCMAKE_CXX_FLAGS_DEBUG="-O1 -g1" \
	    -DDISC_SANITIZE=ON \
	    -DDISC_BUILD_BENCHMARKS=OFF -DDISC_BUILD_PYTHON=OFF >/dev/null
	@cmake --build build-asan -j $(JOBS)
	@cd build-asan && ASAN_OPTIONS=detect_leaks=1 UBSAN_OPTIONS=print_stacktrace=1 \
	    ctest --output-on-failure -j $(JOBS) -E "python|bench"

# The concurrency tests (one circuit run from many threads) under ThreadSanitizer (CI runs this
# too). Only the library and those tests are built.
test-tsan: deps
	@cmake -S . -B build-tsan -G Ninja -DCMAKE_BUILD_TYPE=Debug -DCMAKE_CXX_FLAGS_DEBUG="-O1 -g1" \
	    -DDISC_TSAN=ON -DDISC_BUILD_BENCHMARKS=OFF -DDISC_BUILD_PYTHON=OFF >/dev/null
	@cmake --build build-tsan -j $(JOBS) --target disc_concurrency_tests
	@TSAN_OPTIONS="halt_on_error=1 second_deadlock_stack=1" \
	    build-tsan/tests/disc_concurrency_tests "[concurrency]"

# Fuzz the netlist reader (parse, checks, set-up), the trace reader and the plate-type JSON
# reader with libFuzzer, FUZZ_SECONDS each, libdisc instrumented too (not part of CI; CI replays
# tests/fuzz/corpus/). New inputs that find a fault belong in that corpus.
FUZZ_SECONDS ?= 120
FUZZ_TARGETS = netlist_fuzz trace_fuzz plate_json_fuzz
fuzz: deps
	@bash .ci/install-deps clang libclang-rt-14-dev
	@CXX=clang++ cmake -S . -B build-fuzz -G Ninja -DCMAKE_BUILD_TYPE=RelWithDebInfo -DDISC_FUZZ=ON \
	    -DDISC_BUILD_TESTS=OFF -DDISC_BUILD_BENCHMARKS=OFF -DDISC_BUILD_PYTHON=OFF >/dev/null
	@cmake --build build-fuzz -j $(JOBS) --target $(FUZZ_TARGETS)
	@for t in $(FUZZ_TARGETS); do \
	    mkdir -p build-fuzz/corpus/$$t && cp tests/fuzz/corpus/$$t/* build-fuzz/corpus/$$t/ && \
	    (cd build-fuzz/corpus && ../$$t -max_total_time=$(FUZZ_SECONDS) -timeout=10 \
	        -rss_limit_mb=2048 $$t) || exit 1; done

bench: build
	@/usr/bin/python3 benchmarks/run_benchmarks.py --build $(BUILD)

clean:
	@rm -rf $(BUILD)
