/* workspace.h - buffers laid out in one caller-provided workspace (inside
 * the core). A compute function does not allocate: its size query lays
 * its buffers out with base NULL and reports where the layout ends; the
 * run lays them out again, by the same calls, in the caller's memory
 * (LAPACK's lwork query does the same). Every buffer starts on a multiple
 * of SL_WS_ALIGN bytes, in the order of the calls. */
#ifndef SLUICE_WORKSPACE_H
#define SLUICE_WORKSPACE_H

#include <stddef.h>
#include <stdint.h>

#include "sluice/status.h"

/* Alignment of every buffer: a cache line, so that buffers written by
 * different threads never share one. */
#define SL_WS_ALIGN 64

/* The end of a layout in which a size overflowed; it stays so through
 * every later call. */
#define SL_WS_OVERFLOW SIZE_MAX

/* Reserve count x size bytes at the first multiple of SL_WS_ALIGN at or
 * after *off (the end of the layout so far, 0 at the start) and move *off
 * past them. Returns the buffer in base, or NULL when only measuring
 * (base NULL). When the product or the new end overflows (the end stays
 * at least 2 SL_WS_ALIGN below SIZE_MAX), *off becomes SL_WS_OVERFLOW and
 * this and every later call return NULL. */
static inline void *sl_ws_take(unsigned char *base, size_t *off, size_t count,
                               size_t size)
{
    size_t bytes, at;
    if (*off == SL_WS_OVERFLOW || sl_size_mul(count, size, &bytes) ||
        bytes > SIZE_MAX - 2 * SL_WS_ALIGN || *off > SIZE_MAX - 2 * SL_WS_ALIGN - bytes) {
        *off = SL_WS_OVERFLOW;
        return NULL;
    }
    at = (*off + SL_WS_ALIGN - 1) / SL_WS_ALIGN * SL_WS_ALIGN;
    *off = at + bytes;
    return base != NULL ? base + at : NULL;
}

/* sl_ws_take of `bytes` bytes that stores the buffer in *out (unless out
 * is NULL) and returns the new end *off. */
static inline size_t sl_ws_carve(unsigned char *base, size_t *off, size_t bytes,
                                 void **out)
{
    void *at = sl_ws_take(base, off, bytes, 1);
    if (out != NULL)
        *out = at;
    return *off;
}

/* The bytes a layout that ends at `off` needs: 0 if a size overflowed. */
static inline size_t sl_ws_size(size_t off)
{
    return off == SL_WS_OVERFLOW ? 0 : off;
}

#endif
