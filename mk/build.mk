# build.mk - compile rules of libsluice, its MEX gateways and the model
# checker of sluice.build_model, shared by the project's Makefile and by
# the Octave package's src/Makefile (make pkg).
#
# The including file sets:
#   SL_SRC     core sources (src/*.c, src/models/*.c)
#   SL_INC     public headers (the folder holding sluice/*.h)
#   SL_MEX     gateway sources (mex/*.c; mex/mex*.c and mex/mex*.cc are helpers
#              linked into all)
#   SL_BUILD   where objects and the library go
#   SL_MEXOUT  where the built gateways go (m/+sluice/+kernel)
#   SL_CHECKSRC  the checker of a user's model definition (tools/model_check.c)
#   MKOCTFILE  the mkoctfile of the Octave the gateways are for
#   SL_ORDER   an order-only prerequisite of every compile (the dependency step)
#
# Octave's flags are read from mkoctfile when a recipe first needs them and
# then kept: nothing here runs mkoctfile while the makefile is being read,
# so a build whose dependency step installs Octave gets the right flags on
# its first run.

CC        ?= cc
OPT       ?= -O2
SL_WARN   := -Wall -Wextra -Wshadow -Wpointer-arith -Wstrict-prototypes \
             -Wmissing-prototypes -Wformat=2 -Wundef -Wcast-qual \
             -Wwrite-strings -Wvla -Wdouble-promotion
SL_CSTD   := -std=c11 -D_POSIX_C_SOURCE=200809L
# -fno-math-errno: sqrt and friends need not set errno, so loops over members
# vectorise (NaN and Inf keep their meaning, unlike with -ffast-math).
# -MMD -MP: every object records the headers it includes (SL_BUILD/**/*.d).
SL_CFLAGS  = $(SL_CSTD) $(OPT) -g -fPIC -fopenmp -fno-math-errno -MMD -MP \
             $(SL_WARN) -I$(SL_INC) $(EXTRA_CFLAGS)

# lazily evaluated, once: $(call sl_octconf,VAR) is "mkoctfile -p VAR"
sl_octconf = $(or $(SL_OCT_$(1)),$(eval SL_OCT_$(1) := $(shell $(MKOCTFILE) -p $(1)))$(SL_OCT_$(1)))
SL_OCT_INC   = $(call sl_octconf,INCFLAGS)
SL_CXX       = $(call sl_octconf,CXX)
SL_LIBS      = -lgsl $(call sl_octconf,LAPACK_LIBS) $(call sl_octconf,BLAS_LIBS) -lm

SL_CSRC    := $(sort $(wildcard $(SL_SRC)/*.c $(SL_SRC)/models/*.c))
SL_OBJ     := $(patsubst $(SL_SRC)/%.c,$(SL_BUILD)/obj/%.o,$(SL_CSRC))
SL_LIB     := $(SL_BUILD)/libsluice.a
SL_MEXHELP := $(sort $(wildcard $(SL_MEX)/mex*.c))
# mex/mex*.cc: C++ helpers (Octave's interrupt is a C++ exception),
# compiled with Octave's own C++ compiler
SL_MEXHELPXX := $(sort $(wildcard $(SL_MEX)/mex*.cc))
SL_MEXHOBJ := $(patsubst $(SL_MEX)/%.c,$(SL_BUILD)/mex/%.o,$(SL_MEXHELP)) \
              $(patsubst $(SL_MEX)/%.cc,$(SL_BUILD)/mex/%.o,$(SL_MEXHELPXX))
SL_MEXSRC  := $(filter-out $(SL_MEXHELP),$(sort $(wildcard $(SL_MEX)/*.c)))
SL_MEXBIN  := $(patsubst $(SL_MEX)/%.c,$(SL_MEXOUT)/%.mex,$(SL_MEXSRC))
# sluice.build_model links this object with a user's compiled model file
# and runs the program before building the model's gateways. It refuses a
# checker older than any public header, so every header is a prerequisite
# (not only those the checker includes).
SL_CHECK   := $(SL_BUILD)/model_check.o

# keep the object files of the gateways (they are intermediate to make)
.PRECIOUS: $(SL_BUILD)/mex/%.o

$(SL_BUILD)/obj/%.o: $(SL_SRC)/%.c | $(SL_ORDER)
	@mkdir -p $(dir $@)
	$(CC) $(SL_CFLAGS) -c $< -o $@

# the random streams, the integrators' stage sums, the models' block
# paths and the weights' checks are the hot loops of every filter: let the
# compiler vectorise them over members (gcc's -O2 vectorises only loops
# that need no remainder)
$(SL_BUILD)/obj/rng.o $(SL_BUILD)/obj/integrate.o $(SL_BUILD)/obj/model_linear.o \
  $(SL_BUILD)/obj/weights.o: OPT := -O3
$(patsubst $(SL_SRC)/%.c,$(SL_BUILD)/obj/%.o,$(wildcard $(SL_SRC)/models/*.c)): OPT := -O3

$(SL_LIB): $(SL_OBJ)
	@rm -f $@
	ar rcs $@ $^

$(SL_BUILD)/mex/%.o: $(SL_MEX)/%.c | $(SL_ORDER)
	@mkdir -p $(dir $@)
	$(CC) $(SL_CFLAGS) -DMX_HAS_INTERLEAVED_COMPLEX=1 $(SL_OCT_INC) -c $< -o $@

$(SL_BUILD)/mex/%.o: $(SL_MEX)/%.cc | $(SL_ORDER)
	@mkdir -p $(dir $@)
	$(SL_CXX) $(OPT) -g -fPIC -MMD -MP -Wall -Wextra $(SL_OCT_INC) -I$(SL_MEX) -c $< -o $@

$(SL_CHECK): $(SL_CHECKSRC) $(wildcard $(SL_INC)/sluice/*.h) | $(SL_ORDER)
	@mkdir -p $(dir $@)
	$(CC) $(SL_CFLAGS) -c $< -o $@

$(SL_MEXOUT)/%.mex: $(SL_BUILD)/mex/%.o $(SL_MEXHOBJ) $(SL_LIB)
	@mkdir -p $(dir $@)
	$(MKOCTFILE) --mex -o $@ $^ -fopenmp $(SL_LIBS)

-include $(SL_OBJ:.o=.d) $(SL_CHECK:.o=.d) $(patsubst $(SL_MEX)/%.c,$(SL_BUILD)/mex/%.d,$(SL_MEXHELP) $(SL_MEXSRC)) \
           $(patsubst $(SL_MEX)/%.cc,$(SL_BUILD)/mex/%.d,$(SL_MEXHELPXX))
