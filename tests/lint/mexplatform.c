/* mexplatform.c - fixture: platform code inside #if is accepted here. */
#include <stdio.h>
#if defined(_WIN32)
#include <windows.h>
#else
#include <unistd.h>
#endif
int f(void);
int f(void)
{
    return isatty(1);
}
