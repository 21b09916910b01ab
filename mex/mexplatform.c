/* mexplatform.c - the only code of the gateways that differs by platform. */
#include "mexutil.h"

#include <stdio.h>

#if defined(_WIN32)
#include <windows.h>
#include <io.h>
#elif defined(__unix__) || defined(__APPLE__)
#include <dlfcn.h>
#include <string.h>
#include <time.h>
#include <unistd.h>
#else
#include <time.h>
#endif

#if defined(HAVE_OCTAVE) && defined(__GNUC__) && !defined(_WIN32)
#include <signal.h>
/* Octave's record of a pending Ctrl-C (liboctave's quit.h, checked on
 * Octave 7.3): its SIGINT handler adds one at once, and the interpreter
 * turns a value > 0 into an interrupt the next time it checks. A weak
 * reference, so that a gateway loaded by a program without the symbol
 * still loads (the address is then NULL). */
extern sig_atomic_t octave_interrupt_state __attribute__((weak));
#define SLM_SEES_OCTAVE_INTERRUPT 1
#endif

double slm_monotonic_seconds(void)
{
#if defined(_WIN32)
    LARGE_INTEGER count, freq;
    QueryPerformanceCounter(&count);
    QueryPerformanceFrequency(&freq);
    return (double)count.QuadPart / (double)freq.QuadPart;
#elif defined(__unix__) || defined(__APPLE__)
    struct timespec ts;
    clock_gettime(CLOCK_MONOTONIC, &ts);
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
#else
    return (double)clock() / (double)CLOCKS_PER_SEC;
#endif
}

int slm_stdout_is_terminal(void)
{
#if defined(_WIN32)
    return _isatty(_fileno(stdout));
#elif defined(__unix__) || defined(__APPLE__)
    return isatty(STDOUT_FILENO);
#else
    return 0;
#endif
}

int slm_take_interrupt(void)
{
#if defined(SLM_SEES_OCTAVE_INTERRUPT)
    /* Taken here, the interrupt becomes the run's own error
     * (sluice:<fn>:interrupted) after the core has unwound; left to the
     * interpreter it would unwind through the core's frames as Octave's
     * own interrupt. Only the pending count is cleared: Octave's flag of
     * caught signals stays, so any other signal is still handled. */
    if (&octave_interrupt_state != NULL && octave_interrupt_state > 0) {
        octave_interrupt_state = 0;
        return 1;
    }
#endif
    return 0;
}

long slm_pid(void)
{
#if defined(_WIN32)
    return (long)GetCurrentProcessId();
#elif defined(__unix__) || defined(__APPLE__)
    return (long)getpid();
#else
    return 0;
#endif
}

int slm_file_sync(FILE *f)
{
    if (fflush(f) != 0)
        return -1;
#if defined(_WIN32)
    return _commit(_fileno(f));
#elif defined(__unix__) || defined(__APPLE__)
    return fsync(fileno(f));
#else
    return 0;
#endif
}

int slm_file_replace(const char *from, const char *to)
{
#if defined(_WIN32)
    return MoveFileExA(from, to, MOVEFILE_REPLACE_EXISTING | MOVEFILE_WRITE_THROUGH) ? 0 : -1;
#else
    /* POSIX rename replaces `to` atomically: a reader sees the old file
     * or the new one, never a part */
    return rename(from, to);
#endif
}

void slm_sleep_seconds(double s)
{
    if (!(s > 0))
        return;
#if defined(_WIN32)
    Sleep((DWORD)(s * 1e3));
#elif defined(__unix__) || defined(__APPLE__)
    struct timespec ts;
    ts.tv_sec = (time_t)s;
    ts.tv_nsec = (long)((s - (double)ts.tv_sec) * 1e9);
    nanosleep(&ts, NULL);
#else
    (void)s;
#endif
}

slm_function slm_symbol(const char *name)
{
    slm_function f = NULL;
#if !defined(_WIN32) && (defined(__unix__) || defined(__APPLE__))
    /* the global scope: the program and every library loaded global */
    void *self = dlopen(NULL, RTLD_NOW), *sym;
    if (self == NULL)
        return NULL;
    sym = dlsym(self, name);
    if (sym != NULL)
        memcpy(&f, &sym, sizeof f); /* POSIX: a data pointer holds a function's */
    dlclose(self);
#else
    (void)name;
#endif
    return f;
}
