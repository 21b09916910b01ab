/* bad_test.c - a test that handles a failed allocation badly, for the
 * self-test of make check-alloc (tests/alloc/selftest.sh): with the 1st
 * allocation failed it ends cleanly, with the 2nd it leaks the 1st block,
 * with the 3rd it writes through NULL. The driver must pass the first run
 * and fail the other two. */
#include <stdio.h>
#include <stdlib.h>

int main(void)
{
    char *a, *b, *c;
    a = malloc(16);
    if (a == NULL)
        return 0;
    b = malloc(32);
    if (b == NULL)
        return 0; /* a is never freed */
    c = malloc(64);
    ((volatile char *)c)[0] = 1; /* unchecked (volatile: the store stays) */
    free(a);
    free(b);
    free(c);
    printf("bad_test: 1 passed, 0 failed\n");
    return 0;
}
