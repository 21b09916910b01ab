# Makefile of the compiled part of the sluice Octave package: pkg install
# runs it in src/ with MKOCTFILE set. It builds the gateways into
# ../inst/+sluice/+kernel, and puts what sluice.build_model compiles a
# user's model against (headers, gateway sources, the library, the
# compiled model checker) into ../inst/sdk.
MKOCTFILE ?= mkoctfile
OCTAVE    ?= octave-cli
CC        := $(or $(shell $(MKOCTFILE) -p CC 2>/dev/null),cc)
SL_SRC    := core
SL_INC    := include
SL_MEX    := mex
SL_BUILD  := build
SL_MEXOUT := ../inst/+sluice/+kernel
SL_CHECKSRC := tools/model_check.c
SL_ORDER  :=
.DEFAULT_GOAL := all
include build.mk

PUBLIC    := $(sort $(basename $(notdir $(wildcard ../inst/+sluice/*.m))))
PUBLIC    := $(filter-out Contents,$(PUBLIC))

.PHONY: all sdk links help-index
all: $(SL_MEXBIN) sdk links help-index

# the headers first: sluice.build_model refuses a library or checker
# older than the headers beside it
sdk: $(SL_LIB) $(SL_CHECK) $(SL_BUILD)/mex/mexcall.o
	mkdir -p ../inst/sdk/build/mex
	cp -r include mex ../inst/sdk/
	cp $(SL_LIB) $(SL_CHECK) ../inst/sdk/build/
	cp $(SL_BUILD)/mex/mexcall.o ../inst/sdk/build/mex/

# a file sluice.<name> beside the package folder for each public function,
# so that Octave's "test sluice.<name>" and "demo sluice.<name>" find it
links:
	for f in $(PUBLIC); do cp ../inst/+sluice/$$f.m ../inst/sluice.$$f; done

# lookfor's index of the package's functions. pkg install rewrites every
# doc-cache under the package after this build (indexing top-level
# functions only), so the index is kept as sdk/help-index and PKG_ADD puts
# it in place when the package is loaded.
help-index: sdk
	$(OCTAVE) --no-gui --quiet --no-history --norc --eval \
	  "warning('off', 'Octave:shadowed-function'); addpath('$(CURDIR)/../inst'); sluice.internal.help_cache('$(CURDIR)/../inst');"
	mv ../inst/doc-cache ../inst/sdk/help-index
