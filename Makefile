# sluice - build, test, demo, benchmark.
#   make            build libsluice and the Octave gateways
#   make check      every test (C unit tests, then Octave tests)
#   make demo       the demo scenario
#   make bench      benchmarks (ratios against vectorised Octave)
#   make check-asan C unit tests under AddressSanitizer + UBSan

SHELL    := /bin/bash
CC       ?= cc
OCTAVE   ?= octave-cli
BUILD    ?= build
MKOCT    := $(shell command -v mkoctfile 2>/dev/null)

WARN     := -Wall -Wextra -Wshadow -Wpointer-arith -Wstrict-prototypes \
            -Wmissing-prototypes -Wformat=2 -Wundef -Wcast-qual \
            -Wwrite-strings -Wvla -Wdouble-promotion
OPT      ?= -O2
CSTD     := -std=c11 -D_POSIX_C_SOURCE=200809L
# -fno-math-errno: sqrt and friends need not set errno, so loops over members
# vectorise (NaN and Inf keep their meaning, unlike with -ffast-math)
CFLAGS_ALL = $(CSTD) $(OPT) -g -fPIC -fopenmp -fno-math-errno $(WARN) -Iinclude $(EXTRA_CFLAGS)
ifneq ($(MKOCT),)
BLAS_LIBS   := $(shell mkoctfile -p BLAS_LIBS)
LAPACK_LIBS := $(shell mkoctfile -p LAPACK_LIBS)
OCT_INC     := $(shell mkoctfile -p INCFLAGS)
endif
LIBS     := -lgsl $(LAPACK_LIBS) $(BLAS_LIBS) -lm

SRC      := $(sort $(wildcard src/*.c src/models/*.c))
OBJ      := $(patsubst src/%.c,$(BUILD)/obj/%.o,$(SRC))
LIB      := $(BUILD)/libsluice.a
# mex/mex*.c are helpers linked into every gateway; the rest are gateways
MEXHELP  := $(sort $(wildcard mex/mex*.c))
MEXHOBJ  := $(patsubst mex/%.c,$(BUILD)/mex/%.o,$(MEXHELP))
MEXSRC   := $(filter-out $(MEXHELP),$(sort $(wildcard mex/*.c)))
MEXOUT   := $(patsubst mex/%.c,m/+sluice/+kernel/%.mex,$(MEXSRC))
CTESTSRC := $(sort $(wildcard tests/c/test_*.c))
CTESTS   := $(patsubst tests/c/%.c,$(BUILD)/tests/%,$(CTESTSRC))
DEPS     := $(BUILD)/.deps-ok

.PHONY: all deps lib mex ctests check check-c check-octave check-asan demo bench clean
# keep the object files of the gateways (they are intermediate to make)
.PRECIOUS: $(BUILD)/mex/%.o

all: mex

# Debian packages the build needs; installed with apt-get when run as root.
PKGS := octave liboctave-dev libgsl-dev libopenblas-dev librandom123-dev octave-statistics octave-parallel gnuplot-nox
deps: $(DEPS)
$(DEPS):
	@bash tools/deps.sh $(PKGS)
	@mkdir -p $(BUILD) && touch $@

$(BUILD)/obj/%.o: src/%.c $(wildcard include/sluice/*.h) $(wildcard src/*.h src/models/*.h) | $(DEPS)
	@mkdir -p $(dir $@)
	$(CC) $(CFLAGS_ALL) -c $< -o $@

# the random streams are the hot loop of every filter: let the compiler
# vectorise the Philox rounds over members
$(BUILD)/obj/rng.o: OPT := -O3

$(LIB): $(OBJ)
	@rm -f $@
	ar rcs $@ $^

lib: $(LIB)

$(BUILD)/mex/%.o: mex/%.c $(wildcard mex/*.h) $(wildcard include/sluice/*.h) | $(DEPS)
	@mkdir -p $(dir $@)
	$(CC) $(CFLAGS_ALL) -DMX_HAS_INTERLEAVED_COMPLEX=1 $(OCT_INC) -c $< -o $@

m/+sluice/+kernel/%.mex: $(BUILD)/mex/%.o $(MEXHOBJ) $(LIB)
	mkoctfile --mex -o $@ $^ -fopenmp $(LIBS)

mex: $(MEXOUT)

$(BUILD)/tests/%: tests/c/%.c tests/c/check.h $(LIB)
	@mkdir -p $(dir $@)
	$(CC) $(CFLAGS_ALL) -Itests/c $< $(LIB) -o $@ -fopenmp $(LIBS) $(EXTRA_LDFLAGS)

ctests: $(CTESTS)

check: all ctests
	@bash tools/lint_matlab
	@bash tests/run_all.sh $(BUILD) "$(OCTAVE)"

.PHONY: lint
# m/ in the language Octave and MATLAB share, mex/ without platform headers
lint:
	@bash tools/lint_matlab

check-c: ctests
	@bash tests/run_all.sh $(BUILD) none

check-octave: all
	@bash tests/run_all.sh none "$(OCTAVE)"

# The C unit tests again, built with AddressSanitizer and UBSan.
check-asan: | $(DEPS)
	$(MAKE) BUILD=build-asan OPT=-O1 \
	  EXTRA_CFLAGS="-fsanitize=address,undefined -fno-omit-frame-pointer -fno-sanitize-recover=undefined" \
	  EXTRA_LDFLAGS="-fsanitize=address,undefined" ctests
	@mkdir -p build-asan && touch build-asan/.deps-ok
	@ASAN_OPTIONS=detect_leaks=1 bash tests/run_all.sh build-asan none

demo: all
	$(OCTAVE) --no-gui --quiet --eval "warning('off', 'Octave:shadowed-function'); addpath('$(CURDIR)/m'); addpath('$(CURDIR)/demos'); demo_flood_town; demo_river_town"

bench: all
	$(OCTAVE) --no-gui --quiet --eval "warning('off', 'Octave:shadowed-function'); addpath('$(CURDIR)/m'); addpath('$(CURDIR)/tests/bench'); run_benchmarks"

clean:
	rm -rf build build-asan m/+sluice/+kernel/*.mex out
