# codedrift — top-level commands. See README.md.
BUILD   ?= build
JOBS    ?= 2
CMAKE_FLAGS ?= -DCMAKE_BUILD_TYPE=RelWithDebInfo

.PHONY: all deps build test demo bench lint format clean

all: build

deps:
	@bash .ci/deps.sh

$(BUILD)/CMakeCache.txt:
	cmake -S . -B $(BUILD) $(CMAKE_FLAGS)

build: deps $(BUILD)/CMakeCache.txt
	cmake --build $(BUILD) -j$(JOBS)

test: build
	cd $(BUILD) && ctest --output-on-failure -j$(JOBS) --timeout 600

demo: build
	bash config/demo.sh $(BUILD)

bench: build
	bash tests/bench/run_bench.sh $(BUILD)

lint:
	clang-format --dry-run --Werror $$(git ls-files '*.cc' '*.h')

format:
	clang-format -i $$(git ls-files '*.cc' '*.h')

clean:
	rm -rf $(BUILD)
