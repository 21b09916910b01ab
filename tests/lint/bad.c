/* Every line of this file that is not blank and not a comment must be
 * reported by tools/lint_matlab (only mex/mexplatform.c may do this). */
#include <unistd.h>
#include <sys/time.h>
#include <pthread.h>
#include <dlfcn.h>
#include <windows.h>
    clock_gettime(CLOCK_MONOTONIC, &ts);
    int tty = isatty(1);
    long pid = getpid();
