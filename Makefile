# sluice - build, test, demo, benchmark, package.
#   make            build libsluice and the Octave gateways
#   make check      every test (C unit tests, then Octave tests)
#   make demo       the demo scenarios
#   make bench      benchmarks (ratios against vectorised Octave)
#   make check-asan C unit tests under AddressSanitizer + UBSan
#   make check-valgrind  C unit tests under valgrind's memcheck (errors and
#                   leaks fail; valgrind comes from tools/debian-packages-dev)
#   make check-alloc  C unit tests with their k-th allocation failed, for
#                   every k (tests/alloc/); the core's objects free of
#                   allocator references (nm)
#   make MPI=1      also the gateway of distributed runs (sluice.kernel.mpi),
#                   with Open MPI from tools/debian-packages-mpi; the same
#                   as make mpi
#   make pkg        the Octave package sluice-<version>.tar.gz
#   make check-pkg  install that package in a temporary place, test it there
#   make lint       m/ in the Octave/MATLAB subset, mex/ free of platform headers,
#                   the core (src/, include/) free of allocator calls
#   make fuzz       libFuzzer harnesses (tests/fuzz/) of the CSV readers and the
#                   entry points' argument checks, FUZZ_RUNS executions each
#                   (clang from tools/debian-packages-dev); any crash fails
#
# Every target that compiles or runs Octave first runs the dependency step
# (tools/deps.sh with tools/debian-packages); nothing here runs mkoctfile or
# Octave while the makefile is read.

SHELL     := /bin/bash
OCTAVE    ?= octave-cli
OCTRUN     = $(OCTAVE) --no-gui --quiet --no-history --norc
BUILD     ?= build
MKOCTFILE ?= mkoctfile
VERSION   := $(shell sed -n 's/^Version: *//p' DESCRIPTION)
PKGFILE   := sluice-$(VERSION).tar.gz

DEPS      := $(BUILD)/.deps-ok
DEPLIST   ?= tools/debian-packages
# developers' tools (memory checker), installed only by the targets using them
DEVDEPS   := $(BUILD)/.deps-dev-ok
DEVLIST   ?= tools/debian-packages-dev
SL_SRC    := src
SL_INC    := include
SL_MEX    := mex
SL_BUILD  := $(BUILD)
SL_MEXOUT := m/+sluice/+kernel
SL_CHECKSRC := tools/model_check.c
SL_ORDER  := $(DEPS)
.DEFAULT_GOAL := all
include mk/build.mk

# Distributed runs (mpirun): the gateway mex/mpi/mpi.c, compiled with Open
# MPI's flags (read from mpicc in the recipes, after the dependency step
# installed it) and built only on request; the core has no MPI in it.
MPILIST   ?= tools/debian-packages-mpi
MPIDEPS   := $(BUILD)/.deps-mpi-ok
SL_MPIBIN := $(SL_MEXOUT)/mpi.mex
$(MPIDEPS): $(MPILIST) tools/deps.sh | $(DEPS)
	@bash tools/deps.sh $(MPILIST)
	@mkdir -p $(dir $@) && touch $@
$(BUILD)/mex/mpi/mpi.o: $(SL_MEX)/mpi/mpi.c $(SL_MEX)/mexutil.h | $(DEPS) $(MPIDEPS)
	@mkdir -p $(dir $@)
	$(CC) $(SL_CFLAGS) -DMX_HAS_INTERLEAVED_COMPLEX=1 $(SL_OCT_INC) $$(mpicc --showme:compile) -c $< -o $@
$(SL_MPIBIN): $(BUILD)/mex/mpi/mpi.o $(SL_MEXHOBJ) $(SL_LIB)
	@mkdir -p $(dir $@)
	$(MKOCTFILE) --mex -o $@ $^ -fopenmp $(SL_LIBS) $$(mpicc --showme:link)
ifeq ($(MPI),1)
all: $(SL_MPIBIN)
endif
.PHONY: mpi
mpi:
	@$(MAKE) MPI=1 all

# the public functions, and for each a file m/sluice.<name> (a link to it)
# that Octave's test and demo find: "test sluice.filter" then works
PUBLIC    := $(sort $(basename $(notdir $(wildcard m/+sluice/*.m))))
PUBLIC    := $(filter-out Contents,$(PUBLIC))
TESTLINKS := $(addprefix m/sluice.,$(PUBLIC))

CTESTSRC  := $(sort $(wildcard tests/c/test_*.c))
CTESTS    := $(patsubst tests/c/%.c,$(BUILD)/tests/%,$(CTESTSRC))

.PHONY: all deps lib mex checker links ctests check check-c check-octave check-asan check-valgrind check-alloc \
        fuzz fuzz-build demo bench pkg check-pkg lint clean

all: mex checker links m/doc-cache

deps: $(DEPS)
# redone when the package list or the script changes
$(DEPS): $(DEPLIST) tools/deps.sh
	@bash tools/deps.sh $(DEPLIST)
	@mkdir -p $(dir $@) && touch $@
$(DEVDEPS): $(DEVLIST) tools/deps.sh | $(DEPS)
	@bash tools/deps.sh $(DEVLIST)
	@mkdir -p $(dir $@) && touch $@

lib: $(SL_LIB)
mex: $(SL_MEXBIN)
checker: $(SL_CHECK)
links: $(TESTLINKS)

m/sluice.%: m/+sluice/%.m | $(DEPS)
	@ln -sf +sluice/$*.m $@

# lookfor's index of the package's functions (Octave's own indexing skips
# package folders)
m/doc-cache: $(wildcard m/+sluice/*.m) m/+sluice/+internal/help_cache.m | $(DEPS)
	$(OCTRUN) --eval "warning('off', 'Octave:shadowed-function'); addpath('$(CURDIR)/m'); sluice.internal.help_cache('$(CURDIR)/m');"

$(BUILD)/tests/%: tests/c/%.c $(SL_LIB) $(CTEST_LINKDEPS) | $(DEPS)
	@mkdir -p $(dir $@)
	$(CC) $(SL_CFLAGS) -Itests/c $< $(SL_LIB) -o $@ -fopenmp $(SL_LIBS) $(EXTRA_LDFLAGS)

ctests: $(CTESTS)
-include $(CTESTS:=.d)

check: all ctests
	@bash tools/lint_matlab
	@bash tools/lint_core
	@bash tests/run_all.sh $(BUILD) "$(OCTRUN)"

# m/ in the language Octave and MATLAB share, mex/ without platform headers,
# the core without allocator calls (its memory comes from the caller)
lint:
	@bash tools/lint_matlab
	@bash tools/lint_core

check-c: ctests
	@bash tests/run_all.sh $(BUILD) none

check-octave: all
	@bash tests/run_all.sh none "$(OCTRUN)"

# The C unit tests again, built with AddressSanitizer and UBSan.
check-asan: | $(DEPS)
	$(MAKE) BUILD=build-asan OPT=-O1 \
	  EXTRA_CFLAGS="-fsanitize=address,undefined -fno-omit-frame-pointer -fno-sanitize-recover=undefined" \
	  EXTRA_LDFLAGS="-fsanitize=address,undefined" ctests
	@ASAN_OPTIONS=detect_leaks=1 bash tests/run_all.sh build-asan none

# memcheck: any invalid access, use of an uninitialised value or definite
# leak is an error (exit 99); OpenMP's thread pool is left out of the leak
# count by looking only at definite and indirect losses
VALGRIND := valgrind -q --error-exitcode=99 --leak-check=full \
            --errors-for-leak-kinds=definite,indirect --show-leak-kinds=definite,indirect
check-valgrind: ctests | $(DEVDEPS)
	@SL_CHECK_LIGHT=1 SL_TEST_RUNNER="$(VALGRIND)" bash tests/run_all.sh $(BUILD) none

# Allocation failures: the C unit tests built again in build-alloc/ with
# the allocator shim tests/alloc/failalloc.c, linked with -Wl,--wrap for
# malloc, calloc, realloc, free, aligned_alloc and posix_memalign. --wrap
# redirects only the calls resolved at this static link: those of the test
# itself and of the core (libsluice.a). The shared libraries -- GSL,
# OpenBLAS, libgomp, libc's own internals (stdio buffers, qsort's scratch)
# -- allocate unseen and are never failed. Then, in order:
# tests/alloc/selftest.sh shows the driver a test that leaks and crashes
# on a failed allocation (tests/alloc/bad_test.c), which it must catch;
# tools/lint_core --objects checks with nm -u that no object of the core
# references an allocator (the compiled side of make lint's source check:
# the list of names is kept in tools/lint_core alone); tests/alloc/run.sh
# runs each test once cleanly to learn its count K of allocations, then
# fails every k = 1..K in turn: for every test in one run
# (SL_FAIL_ALLOC=each: the shim forks at each allocation and the child
# fails it), and for the tests with K <= ALLOC_MAXK outside ALLOC_SKIP
# also in a fresh process per k (SL_FAIL_ALLOC=k), the plain form that
# shows the forked children judge the same. A run must pass or stop at its
# checked allocation (ck_malloc of tests/c/check.h, exit 77 after freeing
# what the test holds); a signal, another status, a failed check or a
# block left allocated fails the target. SL_ALLOC_ALL=1 gives every test
# fresh processes (hours: test_resample has K = 128548).
ALLOC_BUILD := build-alloc
ALLOC_SHIM  := $(ALLOC_BUILD)/alloc/failalloc.o
ALLOC_WRAP  := -Wl,--wrap=malloc,--wrap=calloc,--wrap=realloc,--wrap=free,--wrap=aligned_alloc,--wrap=posix_memalign
ALLOC_MAXK  ?= 3000
ALLOC_SKIP  ?= test_enkf test_pf test_smooth test_enkf_ranks
check-alloc: | $(DEPS)
	$(MAKE) BUILD=$(ALLOC_BUILD) OPT=-O1 CTEST_LINKDEPS=$(ALLOC_SHIM) \
	  EXTRA_LDFLAGS="$(ALLOC_SHIM) $(ALLOC_WRAP)" ctests $(ALLOC_BUILD)/selftest/tests/test_bad
	@bash tests/alloc/selftest.sh $(ALLOC_BUILD)/selftest
	@bash tools/lint_core --objects $(ALLOC_BUILD)/libsluice.a
	@echo "check-alloc: $(ALLOC_BUILD)/libsluice.a references no allocator (nm -u)"
	@SL_ALLOC_MAXK=$(ALLOC_MAXK) SL_ALLOC_SKIP="$(ALLOC_SKIP)" bash tests/alloc/run.sh $(ALLOC_BUILD)

# (inside the make that check-alloc starts, with BUILD=build-alloc)
$(BUILD)/alloc/failalloc.o: tests/alloc/failalloc.c | $(DEPS)
	@mkdir -p $(dir $@)
	$(CC) $(SL_CFLAGS) -c $< -o $@
# the driver's self-test: a test that mishandles failed allocations
$(BUILD)/selftest/tests/test_bad: tests/alloc/bad_test.c $(CTEST_LINKDEPS) | $(DEPS)
	@mkdir -p $(dir $@)
	$(CC) $(SL_CFLAGS) $< -o $@ $(EXTRA_LDFLAGS)

# Fuzzing (libFuzzer, clang): the core built again in build-fuzz/ with the
# fuzzer's coverage and AddressSanitizer + UBSan (without OpenMP, so no
# OpenMP runtime is needed), then each harness run FUZZ_RUNS times from its
# seed corpus tests/fuzz/corpus/<name>/ on one worker. New inputs go to
# build-fuzz/corpus/<name>/ (the tree's corpus is only read); a crash is
# written to build-fuzz/crash-* and fails the target. -Wdouble-promotion is
# left out: with clang, glibc's NAN is a float constant.
FUZZ_CC    ?= clang
FUZZ_RUNS  ?= 200000
FUZZ_FLAGS ?= -max_len=4096 -timeout=20 -print_final_stats=1
FUZZ_NAMES := fuzz_obsfile fuzz_checks
FUZZ_SAN   := -fsanitize=address,undefined -fno-sanitize-recover=undefined \
              -fno-omit-frame-pointer
fuzz: | $(DEVDEPS)
	$(MAKE) BUILD=build-fuzz CC=$(FUZZ_CC) \
	  SL_CFLAGS='$$(SL_CSTD) -O1 -g -fno-math-errno -MMD -MP $$(filter-out -Wdouble-promotion,$$(SL_WARN)) -I$$(SL_INC) $(FUZZ_SAN) -fsanitize=fuzzer-no-link' \
	  fuzz-build
	@set -e; for h in $(FUZZ_NAMES); do \
	  mkdir -p build-fuzz/corpus/$$h; \
	  dict=; [ -f tests/fuzz/$$h.dict ] && dict=-dict=tests/fuzz/$$h.dict; \
	  echo "fuzz: $$h, $(FUZZ_RUNS) runs"; \
	  build-fuzz/fuzz/$$h $(FUZZ_FLAGS) -runs=$(FUZZ_RUNS) $$dict \
	    -artifact_prefix=build-fuzz/ build-fuzz/corpus/$$h tests/fuzz/corpus/$$h \
	    > build-fuzz/$$h.log 2>&1 || { tail -n 60 build-fuzz/$$h.log; \
	    echo "fuzz: $$h FAILED (log: build-fuzz/$$h.log)"; exit 1; }; \
	  grep -E '^(Done|stat::number_of_executed_units|stat::average_exec_per_sec)|(DONE|INITED) +cov:' \
	    build-fuzz/$$h.log | tail -n 4; \
	done

# (inside the make that fuzz starts, with BUILD=build-fuzz)
fuzz-build: $(addprefix $(BUILD)/fuzz/,$(FUZZ_NAMES))
$(BUILD)/fuzz/%: tests/fuzz/%.c $(SL_LIB) | $(DEPS)
	@mkdir -p $(dir $@)
	$(CC) $(SL_CFLAGS) -fsanitize=fuzzer $< $(SL_LIB) -o $@ $(SL_LIBS)

demo: all
	$(OCTRUN) --eval "warning('off', 'Octave:shadowed-function'); addpath('$(CURDIR)/m'); addpath('$(CURDIR)/demos'); demo_flood_town; demo_river_town; demo_lowmarsh_reanalysis;"

bench: all
	$(OCTRUN) --eval "warning('off', 'Octave:shadowed-function'); addpath('$(CURDIR)/m'); addpath('$(CURDIR)/tests/bench'); run_benchmarks"
	@echo; echo "== distributed sweep (mpirun)"; bash tests/bench/mpi/run.sh

# The Octave package: the .m files under inst/, the C sources under src/
# with src/Makefile (mk/pkg-src.mk, which includes the same mk/build.mk),
# and the model checker's source under src/tools.
PKGDIR := $(BUILD)/pkg/sluice-$(VERSION)
pkg: $(PKGFILE)
$(PKGFILE): | $(DEPS)
$(PKGFILE): DESCRIPTION INDEX NEWS COPYING mk/build.mk mk/pkg-src.mk tools/pkg-add $(SL_CHECKSRC) \
            $(SL_CSRC) $(wildcard src/*.h src/models/*.h include/sluice/*.h mex/*.c mex/*.cc mex/*.h) \
            $(shell find m -name '*.m' 2>/dev/null)
	@rm -rf $(BUILD)/pkg && mkdir -p $(PKGDIR)/inst $(PKGDIR)/src
	cp DESCRIPTION INDEX NEWS COPYING $(PKGDIR)/
	cp -r m/. $(PKGDIR)/inst
	rm -f $(PKGDIR)/inst/+sluice/+kernel/*.mex $(PKGDIR)/inst/sluice.* $(PKGDIR)/inst/doc-cache
	cp tools/pkg-add $(PKGDIR)/inst/PKG_ADD
	cp -r src $(PKGDIR)/src/core
	cp -r include mex $(PKGDIR)/src/
	mkdir -p $(PKGDIR)/src/tools && cp $(SL_CHECKSRC) $(PKGDIR)/src/tools/
	cp mk/build.mk $(PKGDIR)/src/build.mk
	cp mk/pkg-src.mk $(PKGDIR)/src/Makefile
	tar -C $(BUILD)/pkg -czf $@ sluice-$(VERSION)
	@echo "built $@"

check-pkg: $(PKGFILE) | $(DEPS)
	@bash tests/check_pkg.sh $(PKGFILE) "$(OCTRUN)"

clean:
	rm -rf build build-asan build-alloc build-fuzz out m/+sluice/+kernel/*.mex m/sluice.* m/doc-cache sluice-*.tar.gz
