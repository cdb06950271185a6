# revisit: one Makefile builds the tool, the libraries, the plugins and the tests.
#   make            build build/revisit, the libraries and build/plugins/*.so
#   make test       build, then run every C test and cross-check (tests/run.sh)
#   make asan       the same tests in an ASan + UBSan build (build-asan/)
#   make bench      benchmarks, one JSON line per figure
#   make demo       demo sweep on the synthetic port district, then its report
#   make install PREFIX=/usr/local
#   make deps       check (and as root install) the Debian packages needed
# B=DIR builds into another folder, so several builds can share one tree.

VERSION := 0.1.0
B       ?= build
PREFIX  ?= /usr/local
CC      ?= cc

PKGS     := libcjson
PKG_CFLAGS := $(shell pkg-config --cflags $(PKGS) 2>/dev/null)
PKG_LIBS   := $(shell pkg-config --libs $(PKGS) 2>/dev/null || echo -lcjson)
BLAS_LIBS  := $(shell pkg-config --libs openblas 2>/dev/null || echo -lopenblas)
BLAS_CFLAGS := $(shell pkg-config --cflags openblas 2>/dev/null)
LAPACK_LIBS := -llapacke

WARN    := -std=c11 -Wall -Wextra -Werror
CFLAGS  ?= -O2 -g
SAN     ?=
ALL_CFLAGS := $(WARN) $(CFLAGS) $(SAN) -D_POSIX_C_SOURCE=200809L -D_DEFAULT_SOURCE \
              -DRV_VERSION='"$(VERSION)"' -DRV_PLUGIN_DIR='"$(PREFIX)/lib/revisit/plugins"' -I. $(PKG_CFLAGS) $(BLAS_CFLAGS) -MMD -MP
HIDDEN  := -fvisibility=hidden
LDLIBS  := $(PKG_LIBS) $(BLAS_LIBS) $(LAPACK_LIBS) -llzf -lbz2 -llz4 -lzstd -ldl -lpthread -lm

# --- sources by layer ---------------------------------------------------------
# One static library per folder, linked once in dependency order (a folder
# may include only the folders after it in LAYERS; tests/e2e_layers.sh checks
# that from the #include lines).  harness/cli/ is the top: the command itself.
LAYERS      := reports run synth results plan perturb metrics io base
SRC_reports := $(wildcard reports/*.c)
SRC_run     := $(wildcard harness/run/*.c)
SRC_synth   := $(wildcard scenarios/*.c)
SRC_results := $(wildcard harness/results/*.c)
SRC_plan    := $(wildcard harness/plan/*.c)
SRC_perturb := $(wildcard perturb/*.c)
SRC_metrics := $(wildcard metrics/*.c)
SRC_io      := $(wildcard harness/io/*.c)
SRC_base    := $(wildcard harness/base/*.c)
CLI_SRC     := $(filter-out harness/cli/main.c,$(wildcard harness/cli/*.c))
PLUGINS     := $(notdir $(patsubst %/,%,$(wildcard harness/plugins/*/)))
PLUGIN_SO   := $(PLUGINS:%=$(B)/plugins/%.so)
# Plugin files an earlier build left that this tree no longer builds (a
# folder since removed or renamed): `revisit methods` would list them as
# broken methods, so every build deletes them.
STALE_SO    := $(filter-out $(PLUGIN_SO),$(wildcard $(B)/plugins/*.so))
TEST_SRC    := $(wildcard tests/test_*.c)
TOOL_SRC    := $(wildcard tests/tool_*.c)
BENCH_SRC   := $(wildcard tests/bench_*.c)
FUZZ_SRC    := $(wildcard tests/fuzz_*.c)

obj = $(patsubst %.c,$(B)/obj/%.o,$(1))
LIBS := $(B)/libcli.a $(LAYERS:%=$(B)/lib%.a)
LINK_LIBS = $(LIBS)

.PHONY: all deps deps-demo deps-test test asan bench demo install clean fuzz
# Set-up runs in two stages: the deps-* goal installs the packages, then a
# fresh $(MAKE) builds, so the package flags above (pkg-config, read when a
# Makefile is parsed) are read only once the packages are there.
SUBMAKE = $(MAKE) --no-print-directory B=$(B) PREFIX=$(PREFIX)
all: deps
	@$(SUBMAKE) build

build: $(B)/revisit $(PLUGIN_SO) $(TEST_SRC:tests/%.c=$(B)/tests/%) \
       $(TOOL_SRC:tests/%.c=$(B)/tests/%) $(BENCH_SRC:tests/%.c=$(B)/tests/%) \
       $(FUZZ_SRC:tests/%.c=$(B)/replay/%) prune-plugins-$(B)
.PHONY: build

prune-plugins-$(B):
	$(if $(STALE_SO),rm -f $(STALE_SO),@:)
.PHONY: prune-plugins-$(B)

deps:
	@bash harness/deps.sh build
deps-demo:
	@bash harness/deps.sh demo
deps-test:
	@bash harness/deps.sh test

$(B)/obj/%.o: %.c
	@mkdir -p $(dir $@)
	$(CC) $(ALL_CFLAGS) $(HIDDEN) -c $< -o $@

# Plugins may end their method table before the optional members appended
# later (they are then NULL), so -Wextra's missing-initializer warning is off
# for them and for the tests that include their sources.
$(B)/obj/tests/%.o: ALL_CFLAGS += -Wno-missing-field-initializers
$(B)/obj/harness/plugins/%.o: harness/plugins/%.c
	@mkdir -p $(dir $@)
	$(CC) $(ALL_CFLAGS) -Wno-missing-field-initializers -fPIC $(HIDDEN) -c $< -o $@

$(foreach l,$(LAYERS),$(eval $(B)/lib$(l).a: $(call obj,$(SRC_$(l)))))
$(B)/libcli.a: $(call obj,$(CLI_SRC))
$(B)/lib%.a:
	@mkdir -p $(dir $@)
	@rm -f $@
	ar rcs $@ $^

$(B)/revisit: $(call obj,harness/cli/main.c) $(LIBS)
	$(CC) $(SAN) $(HIDDEN) -o $@ $< $(LINK_LIBS) $(LDLIBS)

# Keep every object: they are reached through pattern rules and would
# otherwise be deleted as intermediates, forcing a full rebuild next time.
.SECONDARY:

.SECONDEXPANSION:
$(B)/plugins/%.so: $$(call obj,$$(wildcard harness/plugins/%/*.c))
	@mkdir -p $(dir $@)
	$(CC) $(SAN) -shared -o $@ $^ $(LAPACK_LIBS) -lm

$(B)/tests/%: $(B)/obj/tests/%.o $(LIBS)
	@mkdir -p $(dir $@)
	$(CC) $(SAN) -o $@ $< $(LINK_LIBS) $(LDLIBS)

# Fuzz targets (tests/fuzz_*.c, each defining LLVMFuzzerTestOneInput) are
# built twice: as replay programs in every build (tests/replay_main.c feeds
# them each file of tests/corpus/NAME/, so the corpus and every crash found
# run as regression tests), and by `make fuzz` with clang's libFuzzer.
$(B)/replay/%: $(B)/obj/tests/%.o $(B)/obj/tests/replay_main.o $(LIBS)
	@mkdir -p $(dir $@)
	$(CC) $(SAN) -o $@ $< $(B)/obj/tests/replay_main.o $(LINK_LIBS) $(LDLIBS)

FUZZ_SECONDS ?= 60
FB := build-fuzz
fuzz: deps
	@$(MAKE) --no-print-directory B=$(FB) CC=clang CFLAGS='-O1 -g -fno-omit-frame-pointer' \
	  SAN='-fsanitize=fuzzer-no-link,address,undefined' $(LIBS:$(B)/%=$(FB)/%) \
	  $(FUZZ_SRC:tests/%.c=$(FB)/obj/tests/%.o)
	@bash tests/fuzz.sh $(FB) $(FUZZ_SECONDS)

# plugins-DIR builds just the plugins of build folder DIR (used by tests/e2e_asan.sh).
plugins-$(B): $(PLUGIN_SO) prune-plugins-$(B)
.PHONY: plugins-$(B)

export REVISIT_SANITIZED := $(if $(SAN),1,)

test: deps-test
	@$(SUBMAKE) build
	@bash tests/run.sh $(B)

asan:
	@$(MAKE) --no-print-directory B=build-asan CFLAGS='-O1 -g -fno-omit-frame-pointer' \
	  SAN='-fsanitize=address,undefined -fno-sanitize-recover=undefined' test

bench: deps-test
	@$(SUBMAKE) build
	@bash tests/bench.sh $(B)

demo: deps-demo
	@$(SUBMAKE) build
	@bash scenarios/demo.sh $(B)

install: all
	install -d $(DESTDIR)$(PREFIX)/bin $(DESTDIR)$(PREFIX)/include/revisit \
	  $(DESTDIR)$(PREFIX)/lib/revisit/plugins $(DESTDIR)$(PREFIX)/share/revisit/help
	install -m 755 $(B)/revisit $(DESTDIR)$(PREFIX)/bin/revisit
	install -m 644 harness/revisit_plugin.h $(DESTDIR)$(PREFIX)/include/revisit/
	install -m 755 $(PLUGIN_SO) $(DESTDIR)$(PREFIX)/lib/revisit/plugins/
	install -d $(DESTDIR)$(PREFIX)/share/revisit/scenarios/sensors
	install -m 644 $(wildcard scenarios/*.json) $(DESTDIR)$(PREFIX)/share/revisit/scenarios/
	install -m 644 $(wildcard scenarios/sensors/*.json) $(DESTDIR)$(PREFIX)/share/revisit/scenarios/sensors/
	$(B)/revisit --help > $(DESTDIR)$(PREFIX)/share/revisit/help/revisit.txt
	for c in $$($(B)/revisit --commands); do \
	  $(B)/revisit $$c --help > $(DESTDIR)$(PREFIX)/share/revisit/help/revisit-$$c.txt; done

clean:
	rm -rf build build-*

-include $(shell find $(B)/obj -name '*.d' 2>/dev/null)
