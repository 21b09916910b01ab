/* mexplatform.c - the only code of the gateways that differs by platform. */
#include "mexutil.h"

#include <stdio.h>

#if defined(_WIN32)
#include <windows.h>
#include <io.h>
#elif defined(__unix__) || defined(__APPLE__)
#include <time.h>
#include <unistd.h>
#else
#include <time.h>
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
