# Thin wrapper over CMake and CTest; all build logic lives in CMakeLists.txt.
BUILD ?= build-release
JOBS ?= $(shell nproc)
CMAKE_FLAGS ?=

.PHONY: deps configure build demo test bench clean

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

bench: build
	@/usr/bin/python3 benchmarks/run_benchmarks.py --build $(BUILD)

clean:
	@rm -rf $(BUILD)
