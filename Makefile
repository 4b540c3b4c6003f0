# The two set-up commands of the README, and a few helpers around CMake.
#   make demo   install missing Debian packages, build (Release), run the bundled demo
#   make test   the same set-up, then the whole suite through ctest
BUILD ?= build
JOBS ?= $(shell nproc)
CMAKE_FLAGS ?=
ifeq ($(CI),true)
CMAKE_FLAGS += -DHETBENCH_WERROR=ON
endif
HB := $(BUILD)/app/hetbench

.PHONY: all deps configure build demo test bench clean

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

clean:
	rm -rf $(BUILD)
