# tagwright - arc-flash hazard labels and energized work permit drafts from study results.
#
#   make            build build/tagwright
#   make demo       install missing Debian packages, build, write the demo outputs to out/
#   make check      unit tests (cmocka), end-to-end tests, and the same under ASan+UBSan
#   make fuzz       every libFuzzer harness in tests/fuzz/ for FUZZ_SECONDS each (clang)
#   make valgrind   the end-to-end tests with the binary run under valgrind
#   make install    PREFIX=/usr/local DESTDIR=
#
# Every src/STAGE/*.c goes into build/libtagwright.a; src/main.c is the command table; every
# tests/unit/test_*.c is one cmocka test program linked against the library. The stages are
# base <- read <- rules <- write <- cli: `make layers` fails when an #include points from an
# earlier stage to a later one. New modules and tests need no change here.

CC      ?= cc
PREFIX  ?= /usr/local
BUILD   ?= build
PKGS     = libcjson libqrencode libcrypto icu-uc freetype2 sqlite3
CSTD     = -std=c11 -D_POSIX_C_SOURCE=200809L -D_DEFAULT_SOURCE
WARN     = -Wall -Wextra -Werror -Wshadow -Wstrict-prototypes -Wformat=2
OPT     ?= -O2 -g
DATADIR  = $(PREFIX)/share/tagwright
CPPFLAGS += -Iinclude -DTW_DATADIR='"$(DATADIR)"' $(shell pkg-config --cflags $(PKGS) 2>/dev/null)
CFLAGS  ?=
CFLAGS  += $(CSTD) $(WARN) $(OPT) $(EXTRA_CFLAGS)
LDLIBS  += -lhpdf -lcsv $(shell pkg-config --libs $(PKGS) 2>/dev/null || echo -lcjson -lqrencode -lcrypto -licuuc -licudata -lfreetype -lsqlite3) -lpng -lz -lm -lpthread
LDFLAGS += $(EXTRA_LDFLAGS)

STAGES   = base read rules write cli
LIB_SRC  = $(foreach s,$(STAGES),$(wildcard src/$(s)/*.c))
LIB_OBJ  = $(LIB_SRC:src/%.c=$(BUILD)/obj/%.o)
HEADERS  = $(wildcard include/*/*.h)
TEST_SRC = $(wildcard tests/unit/test_*.c)
TESTS    = $(TEST_SRC:tests/unit/%.c=$(BUILD)/tests/%)
BIN      = $(BUILD)/tagwright

.PHONY: all demo check unit e2e asan-check deps install clean fuzz fuzz-build valgrind bench bench-registry layers
all: $(BIN)

# V=1 shows the full commands.
Q = $(if $(V),,@)

$(BUILD)/obj/%.o: src/%.c $(HEADERS)
	@mkdir -p $(@D)
	@$(if $(V),true,echo "  CC    $<")
	$(Q)$(CC) $(CPPFLAGS) $(CFLAGS) -c -o $@ $<

$(BUILD)/libtagwright.a: $(LIB_OBJ)
	$(Q)rm -f $@ && ar rcs $@ $^

$(BIN): $(BUILD)/obj/main.o $(BUILD)/libtagwright.a
	@$(if $(V),true,echo "  LINK  $@")
	$(Q)$(CC) $(CFLAGS) $(LDFLAGS) -o $@ $^ $(LDLIBS)

$(BUILD)/tests/%: tests/unit/%.c tests/unit/tw_test.h tests/same_results.h tests/fail_closed.h $(BUILD)/libtagwright.a | $(BUILD)/tests
	@$(if $(V),true,echo "  TEST  $@")
	$(Q)$(CC) $(CPPFLAGS) -Itests/unit $(CFLAGS) $(LDFLAGS) -o $@ $< $(BUILD)/libtagwright.a $(LDLIBS) -lcmocka

$(BUILD)/tests:
	mkdir -p $@

deps:
	scripts/install-deps

demo: deps
	$(MAKE) all
	scripts/demo

unit: $(TESTS)
	@set -e; for t in $(TESTS); do echo "== $$t"; TW_SOURCE_DIR=$(CURDIR) $$t; done

e2e: $(BIN)
	TW_BIN=$(CURDIR)/$(BIN) tests/e2e/run

# The same unit and end-to-end tests built with AddressSanitizer and UndefinedBehaviorSanitizer.
asan-check:
	$(MAKE) BUILD=build-asan OPT="-O1 -g -fno-omit-frame-pointer" \
	  EXTRA_CFLAGS="-fsanitize=address,undefined -fno-sanitize-recover=all" \
	  EXTRA_LDFLAGS="-fsanitize=address,undefined" unit e2e

check: layers unit e2e asan-check
	@echo "make check: all test suites passed"

install: $(BIN)
	install -d $(DESTDIR)$(PREFIX)/bin $(DESTDIR)$(DATADIR)/layouts $(DESTDIR)$(PREFIX)/share/man/man1
	install -m 755 $(BIN) $(DESTDIR)$(PREFIX)/bin/tagwright
	install -m 644 layouts/*.json $(DESTDIR)$(DATADIR)/layouts/
	install -m 644 docs/tagwright.1 $(DESTDIR)$(PREFIX)/share/man/man1/tagwright.1

# libFuzzer harnesses (tests/fuzz/fuzz_*.c), built with clang and ASan+UBSan into build-fuzz/,
# each run for FUZZ_SECONDS on a working copy of its seed corpus (docs/fuzzing.md).
FUZZ_SECONDS ?= 10
FUZZ_JOBS    ?= 1
FUZZ_RUNS    ?=
FUZZ_TIMEOUT ?= 10
FUZZ_SRC      = $(wildcard tests/fuzz/fuzz_*.c)
FUZZ_BINS     = $(FUZZ_SRC:tests/fuzz/%.c=$(BUILD)/fuzz/%)
FUZZ_SAN      = -fsanitize=address,undefined -fno-sanitize-recover=all

$(BUILD)/fuzz/%: tests/fuzz/%.c tests/fuzz/fuzz_common.h tests/same_results.h tests/fail_closed.h $(BUILD)/libtagwright.a
	@mkdir -p $(@D)
	$(CC) $(CPPFLAGS) -Itests/fuzz $(CFLAGS) -fsanitize=fuzzer $(LDFLAGS) -o $@ $< \
	  $(BUILD)/libtagwright.a $(LDLIBS)

fuzz-build: $(FUZZ_BINS)

fuzz:
	$(MAKE) CC=clang BUILD=build-fuzz OPT="-O2 -g -fno-omit-frame-pointer" \
	  EXTRA_CFLAGS="-fsanitize=fuzzer-no-link $(FUZZ_SAN)" EXTRA_LDFLAGS="$(FUZZ_SAN)" fuzz-build
	FUZZ_JOBS=$(FUZZ_JOBS) FUZZ_RUNS=$(FUZZ_RUNS) FUZZ_TIMEOUT=$(FUZZ_TIMEOUT) \
	  tests/fuzz/run build-fuzz $(FUZZ_SECONDS)

# The end-to-end tests with every run of the binary wrapped in valgrind (tests/e2e/lib.sh).
VALGRIND = valgrind -q --error-exitcode=99 --leak-check=full \
	  --errors-for-leak-kinds=definite,indirect

valgrind: $(BIN)
	TW_WRAP="$(VALGRIND)" TW_BIN=$(CURDIR)/$(BIN) tests/e2e/run

# Earlier stages never include later ones (scripts/layers; DEVELOPERS.md "Code layout").
layers:
	scripts/layers

clean:
	rm -rf build build-asan build-fuzz out

# Synthetic studies of 1,000, 10,000 and 100,000 buses: labels/s, wall and CPU time, peak
# memory, and the growth exponent (bench/run.py; docs/performance.md). BENCH_ARGS adds options,
# e.g. BENCH_ARGS="--sizes 1000,10000 --repeat 3".
bench: $(BIN) $(BUILD)/bench/record
	python3 bench/run.py --bin $(BIN) $(BENCH_ARGS)
	python3 bench/registry.py --bin $(BIN) --record $(BUILD)/bench/record

# The registry alone (bench/registry.py): verify and a one-label reprint beside 1,000 and
# 50,000 labels, and recording a 10,000-label run.
bench-registry: $(BIN) $(BUILD)/bench/record
	python3 bench/registry.py --bin $(BIN) --record $(BUILD)/bench/record $(REGISTRY_BENCH_ARGS)

$(BUILD)/bench/record: bench/record.c $(BUILD)/libtagwright.a
	@mkdir -p $(@D)
	$(Q)$(CC) $(CPPFLAGS) $(CFLAGS) $(LDFLAGS) -o $@ $< $(BUILD)/libtagwright.a $(LDLIBS)
