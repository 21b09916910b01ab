/* clones.h - SL_CLONES before a hot loop's function compiles it twice, for
 * AVX2 and for any x86-64, and the loader picks the one the processor runs
 * (GCC's target_clones, through glibc's ifunc). Neither clone contracts a
 * product and a sum into an FMA (-std=c11 keeps -ffp-contract=off, and the
 * avx2 target does not enable FMA), so both give the same bits; the wider
 * vectors only do more members an instruction. Elsewhere, or with
 * -DSL_NO_CLONES, it is one ordinary function. */
#ifndef SLUICE_CLONES_H
#define SLUICE_CLONES_H

#if defined(__GNUC__) && !defined(__clang__) && __GNUC__ >= 6 && defined(__x86_64__) && \
    defined(__linux__) && !defined(SL_NO_CLONES)
#define SL_CLONES __attribute__((target_clones("avx2", "default")))
#else
#define SL_CLONES
#endif

#endif
