# lamina - build, test, install.  See DEVELOPERS.md.
#
#   make               build every program into bin/
#   make check         install missing Debian packages, build, run the TAP tests
#   make sanitize check   the same under AddressSanitizer + UBSan
#   make valgrind-check   command-line tests under valgrind
#   make demo          the example pipeline
#   make bench         benchmarks (print figures, assert nothing)
#   make fuzz          libFuzzer targets, FUZZ_SECONDS each (default 60)

PREFIX  ?= /usr/local
DESTDIR ?=
# make's built-in default for CC is cc; gcc unless the user names another.
ifeq ($(origin CC),default)
CC      := gcc
endif
SHELL   := /bin/bash

WARN    := -std=c11 -Wall -Wextra -Wshadow -Wpedantic -Werror
# cblas.h lives in Debian's multiarch include directory.
MULTIARCH := $(shell $(CC) -print-multiarch 2>/dev/null)
CPPFLAGS += -D_POSIX_C_SOURCE=200809L -Icommon $(if $(MULTIARCH),-I/usr/include/$(MULTIARCH))
OPT     ?= -O2
LDLIBS  += -llapacke -lopenblas -lz -lm -lpthread

# `make sanitize check` builds with ASan + UBSan into build/san and runs the
# tests against those binaries; a plain build lives in build/rel and bin/.
ifneq ($(filter sanitize,$(MAKECMDGOALS)),)
MODE    := san
OPT     := -O1 -g -fno-omit-frame-pointer
SANFLAGS := -fsanitize=address,undefined -fno-sanitize-recover=undefined
BINDIR  := build/san/bin
else
MODE    := rel
SANFLAGS :=
BINDIR  := bin
endif

CFLAGS  := $(WARN) $(OPT) $(SANFLAGS) $(EXTRA_CFLAGS)
LDFLAGS += $(SANFLAGS)
OBJDIR  := build/$(MODE)

LIB_SRC   := $(sort $(wildcard common/*.c))
LIB_OBJ   := $(LIB_SRC:common/%.c=$(OBJDIR)/common/%.o)
LIB       := $(OBJDIR)/liblamina.a
TOOL_SRC  := $(sort $(wildcard tools/lam-*.c))
TOOLS     := $(TOOL_SRC:tools/%.c=$(BINDIR)/%)
UNIT_SRC  := $(sort $(wildcard tests/unit/*.c))
UNITS     := $(UNIT_SRC:tests/unit/%.c=$(OBJDIR)/unit/%)
FUZZ_SRC  := $(sort $(wildcard fuzz/fuzz-*.c))
MANPAGES  := $(sort $(wildcard man/*.[157]))

# What each entry point needs from Debian: the demo only the build packages
# (plots are optional: gnuplot-nox); the tests the independent references
# and, optionally, gnuplot-nox to check the study's plots;
# valgrind-check valgrind; fuzz clang with its sanitizer runtime.
DEB_BUILD := libopenblas-dev liblapacke-dev zlib1g-dev
DEB_TEST  := python3-numpy python3-scipy psi4
DEB_PLOT  := gnuplot-nox
DEB_VALGRIND := valgrind
DEB_FUZZ  := clang libclang-rt-14-dev

.PHONY: all deps deps-build deps-test deps-plot deps-valgrind deps-fuzz check test sanitize valgrind-check demo bench fuzz install clean
.DELETE_ON_ERROR:

all: $(TOOLS) $(UNITS)

$(OBJDIR)/common/%.o: common/%.c $(wildcard common/*.h)
	@mkdir -p $(dir $@)
	$(CC) $(CPPFLAGS) $(CFLAGS) -c $< -o $@

$(LIB): $(LIB_OBJ)
	@mkdir -p $(dir $@)
	rm -f $@ && ar rcs $@ $^

$(BINDIR)/lam-%: tools/lam-%.c $(LIB)
	@mkdir -p $(dir $@)
	$(CC) $(CPPFLAGS) $(CFLAGS) $< $(LIB) $(LDFLAGS) $(LDLIBS) -o $@

$(OBJDIR)/unit/%: tests/unit/%.c tests/unit/tap.h tests/unit/testops.h tests/unit/rng.h $(LIB)
	@mkdir -p $(dir $@)
	$(CC) $(CPPFLAGS) -Itests/unit $(CFLAGS) $< $(LIB) $(LDFLAGS) $(LDLIBS) -o $@

# deps-*: install what is missing from Debian when root; otherwise print
# the apt-get command and stop (or, for the optional plot package, go on).
# Nothing is installed or asked for when everything is present.
define need_debs
	@missing=""; for p in $(1); do \
	  dpkg-query -W -f='$${Status}' $$p 2>/dev/null | grep -q 'ok installed' || missing="$$missing $$p"; \
	done; \
	if [ -n "$$missing" ]; then \
	  if [ "$$(id -u)" = 0 ]; then \
	    echo "installing Debian packages:$$missing"; \
	    apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq $$missing; \
	  else \
	    echo "missing Debian packages ($(2)); as root, run:"; \
	    echo "  apt-get update && apt-get install -y$$missing"; \
	    $(if $(3),echo "$(3)",exit 1); \
	  fi; \
	fi
endef

deps: deps-build deps-test
deps-build:
	$(call need_debs,$(DEB_BUILD),to build)
deps-test:
	$(call need_debs,$(DEB_TEST),the tests' independent references)
deps-plot:
	$(call need_debs,$(DEB_PLOT),the demo's plots,going on without the plots)
deps-valgrind:
	$(call need_debs,$(DEB_VALGRIND),valgrind-check)
deps-fuzz:
	$(call need_debs,$(DEB_FUZZ),the fuzz targets)

sanitize:
	@true

# Tests: unit programs and tests/*.t scripts, all TAP, through prove.
# LAM_BIN tells the scripts where the programs are; LAM_UNIT the unit tests.
TEST_ENV := LAM_BIN=$(CURDIR)/$(BINDIR) LAM_UNIT=$(CURDIR)/$(OBJDIR)/unit \
            OPENBLAS_NUM_THREADS=1 ASAN_OPTIONS=detect_leaks=1 \
            UBSAN_OPTIONS=print_stacktrace=1:halt_on_error=1

check: deps deps-plot
	@$(MAKE) --no-print-directory $(if $(filter san,$(MODE)),sanitize) all
	$(TEST_ENV) prove -j2 $(UNITS) tests/*.t

test: all
	$(TEST_ENV) prove -j2 $(UNITS) tests/*.t

valgrind-check: deps-valgrind all
	$(TEST_ENV) LAM_WRAP="valgrind -q --error-exitcode=99 --leak-check=full --errors-for-leak-kinds=definite" \
	  prove -j2 $(wildcard tests/*-cli.t)

demo: deps-build deps-plot
	@$(MAKE) --no-print-directory all
	@$(MAKE) --no-print-directory -C examples demo LAM_BIN=$(CURDIR)/bin

bench: all
	@for b in bench/*.sh; do echo "== $$b"; LAM_BIN=$(CURDIR)/bin bash $$b || exit 1; done

FUZZ_SECONDS ?= 60
FUZZ_BIN := build/fuzz
fuzz: deps-build deps-fuzz
	@mkdir -p $(FUZZ_BIN)
	@for f in $(FUZZ_SRC); do \
	  n=$$(basename $$f .c); \
	  clang $(WARN) -g -O1 -fsanitize=fuzzer,address,undefined -fno-sanitize-recover=undefined $(CPPFLAGS) -Ifuzz $$f $(LIB_SRC) \
	    $(LDLIBS) -o $(FUZZ_BIN)/$$n || exit 1; \
	  mkdir -p $(FUZZ_BIN)/corpus-$$n; cp fuzz/corpus/$$n/* $(FUZZ_BIN)/corpus-$$n/ 2>/dev/null; \
	  echo "== $$n for $(FUZZ_SECONDS) s"; \
	  bash fuzz/run.sh $(FUZZ_BIN)/$$n $(FUZZ_BIN)/corpus-$$n $(FUZZ_SECONDS) $(FUZZ_BIN)/$$n.log || exit 1; \
	done

install: all
	install -d $(DESTDIR)$(PREFIX)/bin $(DESTDIR)$(PREFIX)/share/man/man1 \
	  $(DESTDIR)$(PREFIX)/share/man/man5 $(DESTDIR)$(PREFIX)/share/man/man7
	install -m 755 $(TOOLS) $(DESTDIR)$(PREFIX)/bin/
	for m in $(MANPAGES); do s=$${m##*.}; install -m 644 $$m $(DESTDIR)$(PREFIX)/share/man/man$$s/; done

clean:
	rm -rf build bin
	-$(MAKE) -C examples clean
