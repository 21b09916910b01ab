/* core_good.c - fixture: nothing here calls an allocator. */
/* malloc(3) in a comment is no call; nor is free(p) */
// calloc(1, 2) in a line comment
static const char *msg = "malloc(8) in a string, \"free(p)\" too";
static size_t my_malloc_size(size_t n);
size_t z = sl_enkf_workspace(cfg, n, N, m, 0);
int freed = free_slots(x);
double d = x->free;
char c = '(';
/* a comment over
   two lines: malloc(8)
   */
size_t k = gsl_vector_alloc_size;
