/* mexcall.cc - a gateway's call of an Octave function that catches
 * Octave's interrupt. The one C++ file of the gateways: in Octave an
 * interrupt (Ctrl-C) is a C++ exception that mexCallMATLABWithTrap does
 * not trap (it traps errors only), and only C++ can catch it before it
 * unwinds the gateway's C frames. Octave's C++ headers and mex.h do not
 * mix (each declares mxArray), so this file reads Octave's own and
 * mexcall.h names mxArray as void. Where Octave's headers are absent
 * (another host) it defines nothing and mexrun.c calls the trap
 * directly. */
#include "mexcall.h"

#if defined(__has_include)
#if __has_include(<octave/interpreter.h>)
#define SLM_OCTAVE_CXX 1
#endif
#endif

#if defined(SLM_OCTAVE_CXX)
#include <octave/oct.h>
#include <octave/interpreter.h>
#include <octave/mxarray.h>
#include <octave/mexproto.h>
#include <octave/quit.h>

int slm_call_catching(int nout, void **out, int nin, void **in, const char *fname)
{
    mxArray *trap;
    try {
        trap = mexCallMATLABWithTrap(nout, reinterpret_cast<mxArray **>(out), nin,
                                     reinterpret_cast<mxArray **>(in), fname);
    } catch (const octave::interrupt_exception &) {
        /* what Octave does when an interrupt reaches its prompt, and what
         * the trap does after an error: the interrupt is handled and the
         * interpreter ready for its next statement. The unwound call left
         * the trap's flag set; the gateways' untrapped calls
         * (mexCallMATLAB) need it clear. */
        octave::interpreter *interp = octave::interpreter::the_interpreter();
        mexSetTrapFlag(0);
        if (interp != nullptr)
            interp->recover_from_exception();
        else
            octave_interrupt_state = 0;
        return SLM_CALL_INTERRUPTED;
    }
    if (trap == nullptr)
        return SLM_CALL_RETURNED;
    mxDestroyArray(trap);
    return SLM_CALL_FAILED;
}
#endif
