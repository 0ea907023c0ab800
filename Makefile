# headroom: plain Makefile. `make` builds build/headroom with what is
# installed (a missing tool stops it with the Debian package to install; it
# never runs a package manager); `make check` installs what the tests need
# (scripts/deps.sh) and runs every test; `make asan` the same under
# ASan+UBSan; `make bench` the benchmark; `make demo` the tool on the shipped
# examples; `make install` puts it under PREFIX.

CC      ?= cc
BUILD   ?= build
PREFIX  ?= /usr/local
CSTD    := -std=c17
WARN    := -Wall -Wextra -Wpedantic -Werror -Wshadow -Wconversion \
           -Wstrict-prototypes -Wmissing-prototypes
OPT     ?= -O2 -g
SAN     ?=
CPPFLAGS := -Iinclude -Isrc -Igrammar -I$(BUILD) -I/usr/include/suitesparse -D_XOPEN_SOURCE=700
CFLAGS  := $(CSTD) $(OPT) $(SAN)
LDLIBS  := -lklu -lcsv -lm -lpthread -linih
# Generated scanner/parser code gets the exemptions flex output needs.
GENWARN := -Wall -Wno-unused-function -Wno-sign-compare -Wno-unused-parameter

LIB_SRC := $(filter-out src/main.c src/cli_%.c,$(wildcard src/*.c))
CLI_OBJ := $(BUILD)/obj/main.o $(patsubst src/%.c,$(BUILD)/obj/%.o,$(wildcard src/cli_*.c))
LIB_OBJ := $(patsubst src/%.c,$(BUILD)/obj/%.o,$(LIB_SRC)) \
           $(BUILD)/obj/spice.tab.o $(BUILD)/obj/spice.lex.o
TESTS   := $(patsubst tests/%.c,$(BUILD)/%,$(wildcard tests/test_*.c))
DEPS_STAMP := $(BUILD)/.deps-ok
TOOLS_STAMP := $(BUILD)/.tools-ok
VERSION_H := $(BUILD)/version_git.h

.PHONY: FORCE all deps check asan tsan memcheck fuzz fuzz-replay bench demo clean install test-run expected
all: $(BUILD)/headroom

deps: $(DEPS_STAMP)
$(DEPS_STAMP): scripts/deps.sh
	@mkdir -p $(BUILD)
	bash scripts/deps.sh
	@touch $@

# What building needs, checked once per build folder: scripts/build-tools.sh
# names the Debian package of a missing tool and installs nothing.
$(TOOLS_STAMP): scripts/build-tools.sh
	@mkdir -p $(BUILD)
	@sh scripts/build-tools.sh "$(CC)"
	@touch $@

# The version from `git describe` of this checkout (none outside git: then
# include/version.h's number), rewritten only when it changes so that only
# the files that print the version are compiled again.
FORCE:
$(VERSION_H): FORCE
	@mkdir -p $(BUILD)
	@sh scripts/version.sh . > $@.new && { cmp -s $@.new $@ || mv $@.new $@; }; rm -f $@.new
$(patsubst src/%.c,$(BUILD)/obj/%.o,$(shell grep -l '"version.h"' src/*.c)): $(VERSION_H)

$(BUILD)/spice.tab.c $(BUILD)/spice.tab.h: grammar/spice.y | $(TOOLS_STAMP)
	@mkdir -p $(BUILD)
	bison -Wall -Werror --defines=$(BUILD)/spice.tab.h -o $(BUILD)/spice.tab.c $<

$(BUILD)/spice.lex.c $(BUILD)/spice.lex.h: grammar/spice.l $(BUILD)/spice.tab.h
	flex --header-file=$(BUILD)/spice.lex.h -o $(BUILD)/spice.lex.c $<

$(BUILD)/obj/spice.%.o: $(BUILD)/spice.%.c $(BUILD)/spice.tab.h $(wildcard include/*.h src/*.h grammar/*.h)
	@mkdir -p $(BUILD)/obj
	@echo "  CC      $<"
	@$(CC) $(CPPFLAGS) $(CFLAGS) $(GENWARN) -c $< -o $@

$(BUILD)/obj/%.o: src/%.c $(BUILD)/spice.lex.h $(wildcard include/*.h src/*.h grammar/*.h)
	@mkdir -p $(BUILD)/obj
	@echo "  CC      $<"
	@$(CC) $(CPPFLAGS) $(CFLAGS) $(WARN) -c $< -o $@

$(BUILD)/libheadroom.a: $(LIB_OBJ)
	ar rcs $@ $^

$(BUILD)/headroom: $(CLI_OBJ) $(BUILD)/libheadroom.a
	$(CC) $(CFLAGS) -o $@ $^ $(LDLIBS)

$(BUILD)/test_%: tests/test_%.c tests/testutil.h $(BUILD)/libheadroom.a
	$(CC) $(CPPFLAGS) $(CFLAGS) $(WARN) -Wno-missing-prototypes -o $@ $< \
		$(BUILD)/libheadroom.a -lcmocka $(LDLIBS)

# Fuzz harnesses (tests/fuzz/): each is replayed over its seeds and saved
# crash reproducers in `make check`; `make fuzz` runs them under libFuzzer.
FUZZ    := netlist elab parts profile waiver baseline check
FUZZ_REPLAY := $(patsubst %,$(BUILD)/fuzz_replay_%,$(FUZZ))
FUZZ_DEF := -DFUZZ_RULES='"$(CURDIR)/rules"'
seeds_netlist  := examples tests/data tests/data/topo tests/data/flatten tests/data/inc tests/fuzz/seeds/netlist
seeds_elab     := tests/fuzz/seeds/elab
seeds_parts    := examples/parts.csv tests/fuzz/seeds/parts
seeds_profile  := rules tests/fuzz/seeds/profile
seeds_waiver   := tests/fuzz/seeds/waiver
seeds_baseline := tests/expected/examples.json tests/fuzz/seeds/baseline
seeds_check    := examples tests/data/topo tests/data/sim tests/fuzz/seeds/netlist

$(BUILD)/fuzz_replay_%: tests/fuzz/fuzz_%.c tests/fuzz/replay.c tests/fuzz/fuzz.h $(BUILD)/libheadroom.a
	$(CC) $(CPPFLAGS) $(CFLAGS) $(WARN) -Wno-missing-prototypes $(FUZZ_DEF) -o $@ \
		tests/fuzz/fuzz_$*.c tests/fuzz/replay.c $(BUILD)/libheadroom.a $(LDLIBS)

fuzz-replay: $(FUZZ_REPLAY)
	@set -e; for h in $(FUZZ); do \
		case $$h in netlist) s="$(seeds_netlist)";; elab) s="$(seeds_elab)";; \
		parts) s="$(seeds_parts)";; profile) s="$(seeds_profile)";; \
		waiver) s="$(seeds_waiver)";; baseline) s="$(seeds_baseline)";; \
		check) s="$(seeds_check)";; esac; \
		$(BUILD)/fuzz_replay_$$h $$s tests/fuzz/crashes/$$h; done

# libFuzzer builds (clang): the library with coverage and sanitizers, each
# harness linked against the fuzzing engine.
FUZZ_SAN := -fsanitize=address,undefined -fno-sanitize-recover=all
fuzz: deps
	@bash scripts/deps.sh --fuzz > /dev/null
	@$(MAKE) --no-print-directory CC=clang BUILD=build/fuzz OPT="-O1 -g" \
		SAN="-fsanitize=fuzzer-no-link $(FUZZ_SAN)" build/fuzz/libheadroom.a
	@set -e; for h in $(FUZZ); do \
		clang $(CPPFLAGS:$(BUILD)=build/fuzz) -std=c17 -O1 -g -fsanitize=fuzzer $(FUZZ_SAN) \
		$(FUZZ_DEF) -o build/fuzz/fuzz_$$h tests/fuzz/fuzz_$$h.c \
		build/fuzz/libheadroom.a $(LDLIBS); done
	SEEDS_netlist="$(seeds_netlist)" SEEDS_elab="$(seeds_elab)" SEEDS_parts="$(seeds_parts)" \
	SEEDS_profile="$(seeds_profile)" SEEDS_waiver="$(seeds_waiver)" \
	SEEDS_baseline="$(seeds_baseline)" SEEDS_check="$(seeds_check)" \
		bash scripts/fuzz.sh build/fuzz $(FUZZ)

# Runs every unit test, then the suites of tests/suites.list two at a time
# (scripts/suites.sh: each suite's output whole as it ends, the failures
# summed up at the end).
test-run: $(BUILD)/headroom $(TESTS) fuzz-replay
	@bash scripts/layers.sh --self-test
	@bash scripts/layers.sh $(BUILD)/obj && echo "layers: every module calls and includes only its own or lower layers"
	@set -e; for t in $(TESTS); do echo "== $$t"; \
		HEADROOM=$(BUILD)/headroom $$t; done
	@HEADROOM=$(BUILD)/headroom bash scripts/suites.sh tests/suites.list

check: deps
	@$(MAKE) --no-print-directory test-run

asan: deps
	@$(MAKE) --no-print-directory BUILD=build/asan OPT="-O1 -g" \
		SAN="-fsanitize=address,undefined -fno-sanitize-recover=all -fno-omit-frame-pointer" \
		test-run

# Batch mode under ThreadSanitizer (gcc's -fsanitize=thread).
tsan: deps
	@$(MAKE) --no-print-directory BUILD=build/tsan OPT="-O1 -g" \
		SAN="-fsanitize=thread -fno-omit-frame-pointer" build/tsan/headroom
	bash scripts/tsan.sh build/tsan/headroom

# The unit, command-line and report tests under valgrind memcheck.
memcheck: deps $(BUILD)/headroom $(TESTS)
	bash scripts/memcheck.sh $(BUILD)

bench: deps $(BUILD)/headroom
	bash scripts/bench.sh $(BUILD)/headroom

demo: deps $(BUILD)/headroom
	-$(BUILD)/headroom check --verify --parts examples/parts.csv examples/

# Rewrites tests/expected/ from the current build: review the diff.
expected: $(BUILD)/headroom
	UPDATE_EXPECTED=1 HEADROOM=$(BUILD)/headroom bash tests/reports.sh

install: $(BUILD)/headroom
	install -d $(DESTDIR)$(PREFIX)/bin $(DESTDIR)$(PREFIX)/share/headroom/rules \
		$(DESTDIR)$(PREFIX)/share/man/man1 $(DESTDIR)$(PREFIX)/share/doc/headroom/rules
	install -m 755 $(BUILD)/headroom $(DESTDIR)$(PREFIX)/bin/headroom
	install -m 644 rules/*.profile $(DESTDIR)$(PREFIX)/share/headroom/rules/
	install -m 755 scripts/pre-commit $(DESTDIR)$(PREFIX)/share/headroom/pre-commit
	install -m 644 docs/headroom.1 $(DESTDIR)$(PREFIX)/share/man/man1/headroom.1
	install -m 644 docs/*.md docs/report.schema.json docs/rules.schema.json $(DESTDIR)$(PREFIX)/share/doc/headroom/
	install -m 644 docs/rules/*.md $(DESTDIR)$(PREFIX)/share/doc/headroom/rules/

clean:
	rm -rf build
