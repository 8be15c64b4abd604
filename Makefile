# codedrift — top-level commands. See README.md.
BUILD   ?= build
JOBS    ?= 2
CMAKE_FLAGS ?= -DCMAKE_BUILD_TYPE=RelWithDebInfo

.PHONY: all deps build test demo bench soak lint format clean fuzz fuzz-deps test-sanitize test-tsan

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

# The soak benchmark (not part of `make test`): SOAK_SECONDS of sustained load with reloads and
# a flaky webhook; a table over time, then checks and a verdict (tests/soak/run_soak.sh).
SOAK_SECONDS ?= 600
soak: build
	SOAK_SECONDS=$(SOAK_SECONDS) bash tests/soak/run_soak.sh $(BUILD)

# libFuzzer targets (clang, ASan+UBSan) in build-fuzz/, each run for FUZZ_SECONDS in turn.
FUZZ_SECONDS ?= 60
FUZZ_BUILD   ?= build-fuzz
fuzz-deps: deps
	@bash tests/fuzz/deps.sh

fuzz: fuzz-deps
	cmake -S . -B $(FUZZ_BUILD) -DCMAKE_CXX_COMPILER=clang++ -DCODEDRIFT_FUZZ=ON \
	  -DCODEDRIFT_BUILD_BENCH=OFF -DCMAKE_BUILD_TYPE=RelWithDebInfo
	cmake --build $(FUZZ_BUILD) -j$(JOBS) --target fuzz_targets
	bash tests/fuzz/run_fuzz.sh $(FUZZ_BUILD) $(FUZZ_SECONDS)

# The whole test suite under AddressSanitizer + UndefinedBehaviorSanitizer (g++).
ASAN_BUILD ?= build-asan
test-sanitize: deps
	cmake -S . -B $(ASAN_BUILD) -DCODEDRIFT_SANITIZE=address,undefined \
	  -DCODEDRIFT_BUILD_BENCH=OFF -DCMAKE_BUILD_TYPE=RelWithDebInfo
	cmake --build $(ASAN_BUILD) -j$(JOBS)
	cd $(ASAN_BUILD) && ASAN_OPTIONS=detect_leaks=1:abort_on_error=1:detect_stack_use_after_return=1 \
	  UBSAN_OPTIONS=print_stacktrace=1:halt_on_error=1 \
	  ctest --output-on-failure -j$(JOBS) --timeout 900

# The concurrent parts under ThreadSanitizer: listeners, HTTP server, webhook sink and the
# daemon's integration tests (each uses several io threads). Only these targets are built, so
# only their tests are discovered.
TSAN_BUILD   ?= build-tsan
TSAN_TARGETS ?= listener_test daemon_http_server_test webhook_sink_test daemon_ingest_test \
                model_concurrency_test \
                daemon_control_test hostile_input_test codedriftd codedrift
test-tsan: deps
	cmake -S . -B $(TSAN_BUILD) -DCODEDRIFT_SANITIZE=thread \
	  -DCODEDRIFT_BUILD_BENCH=OFF -DCMAKE_BUILD_TYPE=RelWithDebInfo
	cmake --build $(TSAN_BUILD) -j$(JOBS) --target $(TSAN_TARGETS)
	cd $(TSAN_BUILD) && TSAN_OPTIONS=halt_on_error=1:second_deadlock_stack=1 \
	  ctest --output-on-failure -j$(JOBS) --timeout 900 -L 'unit|integration'

lint:
	clang-format --dry-run --Werror $$(git ls-files '*.cc' '*.h')

format:
	clang-format -i $$(git ls-files '*.cc' '*.h')

clean:
	rm -rf $(BUILD)
