# Makefile of the compiled part of the sluice Octave package: pkg install
# runs it in src/ with MKOCTFILE set. It builds the gateways into
# ../inst/+sluice/+kernel, and puts what sluice.build_model compiles a
# user's model against (headers, gateway sources, the library) into
# ../inst/sdk.
MKOCTFILE ?= mkoctfile
CC        := $(or $(shell $(MKOCTFILE) -p CC 2>/dev/null),cc)
SL_SRC    := core
SL_INC    := include
SL_MEX    := mex
SL_BUILD  := build
SL_MEXOUT := ../inst/+sluice/+kernel
SL_ORDER  :=
.DEFAULT_GOAL := all
include build.mk

PUBLIC    := $(sort $(basename $(notdir $(wildcard ../inst/+sluice/*.m))))
PUBLIC    := $(filter-out Contents,$(PUBLIC))

.PHONY: all sdk links
all: $(SL_MEXBIN) sdk links

sdk: $(SL_LIB)
	rm -rf ../inst/sdk && mkdir -p ../inst/sdk/build
	cp -r include mex ../inst/sdk/
	cp $(SL_LIB) ../inst/sdk/build/

# a file sluice.<name> beside the package folder for each public function,
# so that Octave's "test sluice.<name>" and "demo sluice.<name>" find it
links:
	for f in $(PUBLIC); do cp ../inst/+sluice/$$f.m ../inst/sluice.$$f; done
