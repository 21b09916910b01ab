/* mexcall.h - a gateway's call of an Octave function that catches
 * Octave's interrupt (mex/mexcall.cc). Read by C and C++ alike, so it
 * names mxArray as void (what mex.h makes it in C). */
#ifndef SLUICE_MEXCALL_H
#define SLUICE_MEXCALL_H

#ifdef __cplusplus
extern "C" {
#endif

/* What a call came to. */
enum { SLM_CALL_RETURNED = 0, SLM_CALL_INTERRUPTED = 1, SLM_CALL_FAILED = 2 };

/* Call the Octave function fname(in[0..nin-1]) with the trap
 * (mexCallMATLABWithTrap): SLM_CALL_RETURNED, SLM_CALL_FAILED when the trap
 * caught an error, or SLM_CALL_INTERRUPTED when Octave's interrupt
 * (Ctrl-C) unwound the call; the interrupt is then handled, as at Octave's
 * prompt, and never reaches the caller's frames. out and in are mxArray
 * pointers. Octave only. */
int slm_call_catching(int nout, void **out, int nin, void **in, const char *fname);

#ifdef __cplusplus
}
#endif

#endif
