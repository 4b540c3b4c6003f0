# The two set-up commands of the README, and a few helpers around CMake.
#   make demo   install missing Debian packages, build (Release), run the bundled demo
#   make test   the same set-up, then the whole suite through ctest
#   make sanitize   the unit tests under AddressSanitizer + UndefinedBehaviorSanitizer, the threaded ones under
#                   ThreadSanitizer (what .ci/run does after make test)
#   make fuzz   each libFuzzer target for FUZZ_SECONDS (default 60) with clang (tests/fuzz/)
BUILD ?= build
JOBS ?= $(shell nproc)
CMAKE_FLAGS ?=
ifeq ($(CI),true)
CMAKE_FLAGS += -DHETBENCH_WERROR=ON
endif
HB := $(BUILD)/app/hetbench

FUZZ_BUILD ?= build-fuzz
FUZZ_SECONDS ?= 60
FUZZ_TARGETS ?= sigmf_meta recording session scenario touchstone

.PHONY: all deps configure build demo test bench clean fuzz sanitize

all: build

deps:
	@tests/install-deps.sh

configure: deps
	cmake -S . -B $(BUILD) -DCMAKE_BUILD_TYPE=Release $(CMAKE_FLAGS)

build: configure
	cmake --build $(BUILD) -j $(JOBS)

demo: build
	@app/demo.sh $(HB)

test: build
	cd $(BUILD) && ctest --output-on-failure -j $(JOBS)

bench: build
	$(HB) bench

fuzz: deps
	CC=clang CXX=clang++ cmake -S . -B $(FUZZ_BUILD) -DCMAKE_BUILD_TYPE=RelWithDebInfo -DHETBENCH_FUZZ=ON \
	  -DHETBENCH_SANITIZE=fuzzer-no-link,address,undefined -DHETBENCH_GUI=OFF \
	  -DCMAKE_CXX_FLAGS="-include $(CURDIR)/tests/fuzz/clang_compat.hpp"
	cmake --build $(FUZZ_BUILD) --target fuzzers -j $(JOBS)
	tests/fuzz/run.sh $(FUZZ_BUILD) $(FUZZ_SECONDS) $(FUZZ_TARGETS)

sanitize: deps
	tests/sanitize.sh

clean:
	rm -rf $(BUILD)
