/* test_obsfile.c - the CSV observation table: format rules, every error with
 * its line and column, an exact round trip, and random damage to the text. */
#include "check.h"
#include "obsfile_parsed.h"
#include "sluice/obsfile.h"
#include "sluice/rng.h"

#include <stdint.h>
#include <stdlib.h>
#include <string.h>

/* Measure, allocate, parse: the way the gateway does it. */
static sl_status parse_len(const char *text, size_t len, parsed *p)
{
    memset(p, 0, sizeof *p);
    p->st = sl_obsfile_measure(text, len, &p->sz, &p->err);
    if (p->st != SL_OK)
        return p->st;
    p->t.names = ck_malloc(p->sz.name_bytes + 1);
    p->t.name_at = ck_malloc((p->sz.cols + 1) * sizeof(size_t));
    p->t.is_text = ck_malloc((p->sz.cols + 1) * sizeof(int));
    p->t.slot = ck_malloc((p->sz.cols + 1) * sizeof(size_t));
    p->t.num = ck_malloc((p->sz.rows * p->sz.nnum + 1) * sizeof(double));
    p->t.text = ck_malloc(p->sz.text_bytes + 1);
    p->t.text_at = ck_malloc((p->sz.rows * p->sz.ntext + 1) * sizeof(size_t));
    p->st = sl_obsfile_parse(text, len, &p->sz, &p->t, &p->err);
    return p->st;
}

static sl_status parse(const char *text, parsed *p)
{
    return parse_len(text, strlen(text), p);
}

/* The text must fail with `reason` and a message holding `where`. */
static void expect_error(const char *text, const char *reason, const char *where)
{
    parsed p;
    parse(text, &p);
    CHECK(p.st != SL_OK && strcmp(p.err.reason, reason) == 0,
          "expected %s for [%s], got status %d reason %s (%s)", reason, text,
          (int)p.st, p.err.reason, p.err.message);
    CHECK(strstr(p.err.message, where) != NULL,
          "message for [%s] should hold '%s': %s", text, where, p.err.message);
    release(&p);
}

static uint64_t bits_of(double x)
{
    uint64_t u;
    memcpy(&u, &x, sizeof u);
    return u;
}

int main(void)
{
    parsed p;
    size_t i;

    /* the basic table, columns in any order, spaces around names */
    parse(" value , time,variable ,sigma\n1.5,0,h,0.1\n2.5,1,q,0.2\n", &p);
    CHECK(p.st == SL_OK, "basic: %s", p.err.message);
    CHECK(p.sz.rows == 2 && p.sz.cols == 4 && p.sz.ntext == 1 && p.sz.nnum == 3,
          "basic sizes %zu %zu", p.sz.rows, p.sz.cols);
    CHECK(num_at(&p, "value", 1) == 2.5 && num_at(&p, "time", 1) == 1 &&
          num_at(&p, "sigma", 0) == 0.1, "basic numbers");
    CHECK(strcmp(text_at(&p, "variable", 1), "q") == 0, "basic text");
    CHECK(p.sz.nmissing == 0, "no missing");
    release(&p);

    /* quoting with "" escapes, commas and a line break inside quotes;
     * quoted numbers; spaces around fields dropped */
    parse("time,variable,value,sigma,note\n"
          "0, \"a,\"\"b\"\" c\" ,\"3.25\",1,7\n"
          "1,\"two\nlines\",4,1,\"\"\n", &p);
    CHECK(p.st == SL_OK, "quoting: %s", p.err.message);
    CHECK(p.sz.rows == 2, "quoting rows %zu", p.sz.rows);
    CHECK(strcmp(text_at(&p, "variable", 0), "a,\"b\" c") == 0, "escape: [%s]",
          text_at(&p, "variable", 0));
    CHECK(strcmp(text_at(&p, "variable", 1), "two\nlines") == 0, "line break in quotes");
    CHECK(num_at(&p, "value", 0) == 3.25 && num_at(&p, "note", 0) == 7, "quoted number, extra column");
    CHECK(isnan(num_at(&p, "note", 1)), "empty extra column is NaN");
    release(&p);

    /* CRLF, a BOM, blank lines anywhere, a last line without line end */
    parse("\xEF\xBB\xBFtime,variable,value,sigma\r\n\r\n  \r\n0,x,1,1\r\n\n1,x,2,1", &p);
    CHECK(p.st == SL_OK && p.sz.rows == 2, "crlf/bom/blank: %s", p.err.message);
    CHECK(num_at(&p, "value", 1) == 2 && strcmp(text_at(&p, "variable", 0), "x") == 0,
          "crlf values");
    CHECK(column(&p, "time") == 0, "BOM stripped from the first name");
    release(&p);

    /* missing values: empty, NaN, nan; counted */
    parse("time,variable,value,sigma\n0,x,,1\n1,x,NaN,1\n2,x,nan,1\n3,x,4,1\n", &p);
    CHECK(p.st == SL_OK && p.sz.nmissing == 3, "missing counted %zu (%s)",
          p.sz.nmissing, p.err.message);
    CHECK(isnan(num_at(&p, "value", 0)) && num_at(&p, "value", 3) == 4, "missing NaN");
    release(&p);

    /* families and their columns; empty sigma on poisson / binomial rows */
    parse("time,variable,value,sigma,family,n,dof,limit\n"
          "0,x,1,0.5,gaussian,,,\n"
          "0,x,3,,poisson,,,\n"
          "1,x,2,,binomial,10,,\n"
          "1,x,1,1,student_t,,4,\n"
          "2,x,0.1,1,censored,,,0.2\n"
          "2,x,1,0.3,lognormal,,,\n", &p);
    CHECK(p.st == SL_OK && p.sz.rows == 6 && p.sz.ntext == 2, "families: %s", p.err.message);
    CHECK(strcmp(text_at(&p, "family", 2), "binomial") == 0 && num_at(&p, "n", 2) == 10 &&
          num_at(&p, "dof", 3) == 4 && num_at(&p, "limit", 4) == 0.2 &&
          isnan(num_at(&p, "sigma", 1)), "family columns");
    release(&p);

    /* a header alone: an empty table */
    parse("time,variable,value,sigma\n", &p);
    CHECK(p.st == SL_OK && p.sz.rows == 0, "empty table: %s", p.err.message);
    release(&p);

    /* every error, with its line (header = line 1) and column */
    expect_error("", "badheader", "line 1");
    expect_error("time,variable,value\n0,x,1\n", "badheader", "line 1, column sigma");
    expect_error("time,variable,value,sigma,time\n", "badheader", "line 1, column time");
    expect_error("time,variable,value,sigma,2x\n", "badheader", "line 1, column 5");
    expect_error("time,variable,value,sigma,\n", "badheader", "line 1, column 5");
    expect_error("time,variable,value,sigma\n0,x,1,1\n1,x,1.5q,1\n", "badnumber",
                 "line 3, column value");
    expect_error("time,variable,value,sigma\n0,x,0x10,1\n", "badnumber", "line 2, column value");
    expect_error("time,variable,value,sigma\n0,x,1e999,1\n", "badnumber", "line 2, column value");
    expect_error("time,variable,value,sigma\n0,x,Inf,1\n", "badnumber", "line 2, column value");
    expect_error("time,variable,value,sigma,w\n0,x,1,1,1 2\n", "badnumber", "line 2, column w");
    expect_error("time,variable,value,sigma\n0,x,1,1\n\n1,x,1\n", "badfield",
                 "line 4, column sigma");
    expect_error("time,variable,value,sigma\n0,x,1,1,9\n", "badfield", "line 2, column 5");
    expect_error("time,variable,value,sigma\n0,\"x\"y,1,1\n", "badfield", "line 2, column variable");
    expect_error("time,variable,value,sigma\n0,x\"y,1,1\n", "badfield", "line 2, column variable");
    expect_error("time,variable,value,sigma\n0,\"x,1,1\n", "badfield", "line 2, column variable");
    expect_error("time,variable,value,sigma\n0,x,1,0\n", "badsigma", "line 2, column sigma");
    expect_error("time,variable,value,sigma\n0,x,1,1e-320\n", "badsigma", "line 2, column sigma");
    expect_error("time,variable,value,sigma\n0,x,1,-1\n", "badsigma", "line 2, column sigma");
    expect_error("time,variable,value,sigma\n0,x,1,\n", "badsigma", "line 2, column sigma");
    expect_error("time,variable,value,sigma\n0,x,1,Inf\n", "badsigma", "line 2, column sigma");
    expect_error("time,variable,value,sigma,family\n0,x,1,,student_t\n", "badsigma",
                 "line 2, column sigma");
    expect_error("time,variable,value,sigma\n0,x,1,1\n,x,1,1\n", "badtime", "line 3, column time");
    expect_error("time,variable,value,sigma\nInf,x,1,1\n", "badtime", "line 2, column time");
    expect_error("time,variable,value,sigma\n1,x,1,1\r\n0.5,x,1,1\n", "badorder",
                 "line 3, column time");
    expect_error("time,variable,value,sigma,family\n0,x,1,1,Gaussian\n", "badfamily",
                 "line 2, column family");
    expect_error("time,variable,value,sigma,family\n0,x,1,1,\n", "badfamily",
                 "line 2, column family");
    {
        /* a NUL byte inside the text */
        const char t[] = "time,variable,value,sigma\n0,x\0y,1,1\n";
        parse_len(t, sizeof t - 1, &p);
        CHECK(p.st != SL_OK && strcmp(p.err.reason, "badfield") == 0 &&
              strstr(p.err.message, "line 2, column variable") != NULL,
              "NUL byte: %s %s", p.err.reason, p.err.message);
        release(&p);
    }
    /* a quoted field spanning lines: the line count goes on after it */
    expect_error("time,variable,value,sigma\n0,\"a\nb\",1,1\n1,x,zz,1\n", "badnumber",
                 "line 4, column value");

    /* the parse refuses buffers that do not match the measure */
    {
        const char *t = "time,variable,value,sigma\n0,x,1,1\n";
        parsed q;
        parse(t, &q);
        q.sz.rows = 0;
        CHECK(sl_obsfile_parse(t, strlen(t), &q.sz, &q.t, &q.err) != SL_OK &&
              strcmp(q.err.reason, "badsize") == 0, "size mismatch refused");
        release(&q);
    }

    /* round trip, exact to the bit: random doubles (all bit patterns that
     * are finite, subnormals among them), 1e308, -0, the smallest subnormal,
     * NaN and infinities in an extra column */
    {
        enum { R = 4000 };
        static double tm[R], val[R], sg[R], ex[R];
        static const char *var[R], *fam[R];
        static const char *names[6] = {"x", "with,comma", "q\"uote", " pad ", "", "two\nlines"};
        static const char *fams[3] = {"gaussian", "poisson", "censored"};
        sl_obs_column cols[6];
        sl_stream s;
        size_t need = 0, need2 = 0, bad = 0;
        char *buf;
        sl_error err;
        sl_stream_init(&s, 20240611u, 0, 0, SL_PURPOSE_USER);
        for (i = 0; i < R; i++) {
            uint64_t u;
            double v;
            do {
                u = sl_stream_u64(&s);
                if (i % 7 == 3)
                    u &= 0x800FFFFFFFFFFFFFull; /* a subnormal (or +-0) */
                memcpy(&v, &u, sizeof v);
            } while (!isfinite(v));
            val[i] = v;
            tm[i] = (double)i * 0.1 + sl_stream_uniform(&s) * 0.01;
            sg[i] = sl_stream_uniform(&s) * 3.7;
            ex[i] = sl_stream_normal(&s) * 1e-300;
            var[i] = names[i % 6];
            fam[i] = fams[i % 3];
        }
        val[0] = 1e308;
        val[1] = -0.0;
        val[2] = 4.9406564584124654e-324;
        val[4] = NAN;
        sg[1] = NAN; /* a poisson row */
        ex[5] = INFINITY;
        ex[6] = -INFINITY;
        ex[7] = NAN;
        ex[8] = -0.0;
        cols[0].name = "time"; cols[0].num = tm; cols[0].text = NULL;
        cols[1].name = "variable"; cols[1].num = NULL; cols[1].text = var;
        cols[2].name = "value"; cols[2].num = val; cols[2].text = NULL;
        cols[3].name = "sigma"; cols[3].num = sg; cols[3].text = NULL;
        cols[4].name = "family"; cols[4].num = NULL; cols[4].text = fam;
        cols[5].name = "limit"; cols[5].num = ex; cols[5].text = NULL;
        CHECK(sl_obsfile_format(R, 6, cols, NULL, 0, &need, &err) == SL_OK,
              "format measure: %s", err.message);
        buf = ck_malloc(need);
        CHECK(sl_obsfile_format(R, 6, cols, buf, need - 1, &need2, &err) != SL_OK &&
              strcmp(err.reason, "bufsize") == 0, "too small a buffer refused");
        CHECK(sl_obsfile_format(R, 6, cols, buf, need, &need2, &err) == SL_OK &&
              need2 == need, "format: %s", err.message);
        parse_len(buf, need, &p);
        CHECK(p.st == SL_OK && p.sz.rows == R, "round trip parse: %s", p.err.message);
        if (p.st == SL_OK) {
            for (i = 0; i < R; i++) {
                const char *cn[4] = {"time", "value", "sigma", "limit"};
                const double *orig[4] = {tm, val, sg, ex};
                int k;
                for (k = 0; k < 4; k++) {
                    double a = orig[k][i], b = num_at(&p, cn[k], i);
                    if (isnan(a) ? !isnan(b) : bits_of(a) != bits_of(b))
                        bad++;
                }
                if (strcmp(text_at(&p, "variable", i), var[i]) != 0 ||
                    strcmp(text_at(&p, "family", i), fam[i]) != 0)
                    bad++;
            }
            CHECK(bad == 0, "round trip: %zu cells differ", bad);
            CHECK(p.sz.nmissing == 1, "round trip missing %zu", p.sz.nmissing);
        }
        release(&p);

        /* the writer's checks, naming the line the row would have */
        tm[10] = tm[9] - 1;
        CHECK(sl_obsfile_format(R, 6, cols, NULL, 0, &need2, &err) != SL_OK &&
              strcmp(err.reason, "badorder") == 0 &&
              strstr(err.message, "line 12, column time"), "writer order: %s", err.message);
        tm[10] = NAN;
        CHECK(sl_obsfile_format(R, 6, cols, NULL, 0, &need2, &err) != SL_OK &&
              strcmp(err.reason, "badtime") == 0, "writer time: %s", err.message);
        tm[10] = tm[9];
        sg[0] = -1;
        CHECK(sl_obsfile_format(R, 6, cols, NULL, 0, &need2, &err) != SL_OK &&
              strcmp(err.reason, "badsigma") == 0 &&
              strstr(err.message, "line 2, column sigma"), "writer sigma: %s", err.message);
        sg[0] = 1;
        fam[3] = "normal";
        CHECK(sl_obsfile_format(R, 6, cols, NULL, 0, &need2, &err) != SL_OK &&
              strcmp(err.reason, "badfamily") == 0 &&
              strstr(err.message, "line 5, column family"), "writer family: %s", err.message);
        fam[3] = "gaussian";
        cols[5].name = "value";
        CHECK(sl_obsfile_format(R, 6, cols, NULL, 0, &need2, &err) != SL_OK &&
              strcmp(err.reason, "badheader") == 0, "writer duplicate name: %s", err.message);
        cols[5].name = "limit";
        CHECK(sl_obsfile_format(R, 3, cols, NULL, 0, &need2, &err) != SL_OK &&
              strcmp(err.reason, "badheader") == 0 &&
              strstr(err.message, "column sigma"), "writer missing column: %s", err.message);
        cols[1].num = val;
        CHECK(sl_obsfile_format(R, 6, cols, NULL, 0, &need2, &err) != SL_OK &&
              strcmp(err.reason, "badfield") == 0, "writer column kind: %s", err.message);
        cols[1].num = NULL;

        /* random damage: change, drop or insert bytes of valid text at
         * random places; every result must be OK or an error with a
         * reason, and an OK parse must agree with its own measure */
        {
            enum { TRIALS = 20000, SMALL = 40 };
            size_t len = 0, nok = 0, nerr = 0, cut;
            char *m;
            static const char alphabet[] = ",\"\r\n \t0123456789.eE+-naNIfx\xEF\xBB\xBF";
            /* the header and the first SMALL rows keep each trial quick */
            for (i = 0, cut = 0; i < need && cut <= SMALL; i++)
                if (buf[i] == '\n')
                    cut++;
            len = i;
            m = ck_malloc(len + 64);
            for (i = 0; i < TRIALS; i++) {
                size_t n = len, k, edits = 1 + sl_stream_u64(&s) % 4;
                memcpy(m, buf, len);
                for (k = 0; k < edits; k++) {
                    uint64_t r = sl_stream_u64(&s);
                    size_t at = n ? (size_t)(r % n) : 0;
                    char c = (r >> 40) & 1 ? alphabet[(r >> 20) % (sizeof alphabet - 1)]
                                           : (char)(r >> 48);
                    switch ((r >> 32) % 3) {
                    case 0:
                        if (n)
                            m[at] = c;
                        break;
                    case 1:
                        if (n) {
                            memmove(m + at, m + at + 1, n - at - 1);
                            n--;
                        }
                        break;
                    default:
                        memmove(m + at + 1, m + at, n - at);
                        m[at] = c;
                        n++;
                    }
                }
                if ((i & 1023) == 7)
                    n = (size_t)(sl_stream_u64(&s) % (n + 1)); /* truncated text */
                parse_len(m, n, &p);
                if (p.st == SL_OK) {
                    nok++;
                } else {
                    nerr++;
                    if (p.err.reason[0] == '\0' || strstr(p.err.message, "line ") == NULL)
                        bad++;
                }
                release(&p);
            }
            ck_free(m);
            CHECK(bad == 0, "damaged text: %zu errors without reason or line", bad);
            CHECK(nok + nerr == TRIALS && nok > 0 && nerr > 0,
                  "damaged text: %zu ok, %zu errors", nok, nerr);
            printf("damaged text: %zu trials, %zu parsed, %zu refused\n",
                   (size_t)TRIALS, nok, nerr);
        }
        ck_free(buf);
    }
    CHECK_DONE("test_obsfile");
}
