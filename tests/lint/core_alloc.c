/* core_alloc.c - fixture: every code line calls an allocator. */
double *a = malloc(8 * n);
double *b = calloc(n, sizeof *b);
b = realloc(b, 16);
free(a);
char *s = strdup("x");
void *w = aligned_alloc(64, 128);
int st = posix_memalign(&w, 64, 128);
gsl_vector *v = gsl_vector_alloc(3);
gsl_matrix *m = gsl_matrix_calloc (2, 2);
gsl_eigen_symm_workspace *ws = gsl_eigen_symm_alloc(4);
gsl_vector *u = gsl_vector_alloc_from_block(blk, 0, 3, 1);
void *t = alloca(32);
x = n > 0 ? malloc(n) : NULL; /* a call after code, a comment after it */
