/* flood.c - the human-flood (socio-hydrology) model: a settlement beside a
 * river that grows, moves, raises levees and remembers floods.
 *
 * Di Baldassarre et al. (2013); form of Viglione et al. (2014), secondary
 * source. Equations 3a-d (between floods) and 4-6 (at a flood of level W):
 *   dG/dt = rhoE (1 - D) G
 *   dD/dt = (M - D / lambdaP) sigmaP / sqrt(G)
 *   dH/dt = -kappaT H
 *   dM/dt = -muS M
 *   F  = 1 - exp(-(W + xiH H) / (alphaH D))  if W + xiH H > H, else 0
 *   R* = epsT (W + xiH H - H)                if F > 0
 *   R  = R* if F G > gammaE R* sqrt(G) (worth it) and
 *             G - F G > gammaE R* sqrt(G) (affordable), else 0
 *   S  = alphaS F if R > 0, else F
 *   G+ = G - F G - gammaE R sqrt(G),  H+ = H + R,  M+ = M + S
 * States G, D, H, M, and F, R: the damage fraction and the levee raising of
 * the latest flood (0 before any), constant between floods. */
#include <math.h>
#include <stddef.h>

#include "models.h"
#include "../clones.h"

enum { G_, D_, H_, M_, F_, R_ };
enum { XIH, ALPHAH, RHOE, GAMMAE, LAMBDAP, SIGMAP, EPST, KAPPAT, ALPHAS, MUS };

static void flood_rhs(const sl_model_def *def, size_t n, double t,
                      const double *x, const double *p, const double *u,
                      double *dx)
{
    const double G = x[G_], D = x[D_];
    size_t i;
    (void)def;
    (void)t;
    (void)u;
    if (!(G > 0)) {
        /* outside the model's domain (sqrt(G)): a non-finite derivative
         * makes the adaptive method reject the stage and shrink its step,
         * and a member that stays there ends as NaN */
        for (i = 0; i < n; i++)
            dx[i] = (double)NAN;
        return;
    }
    dx[G_] = p[RHOE] * (1.0 - D) * G;
    dx[D_] = (x[M_] - D / p[LAMBDAP]) * p[SIGMAP] / sqrt(G);
    dx[H_] = -p[KAPPAT] * x[H_];
    dx[M_] = -p[MUS] * x[M_];
    dx[F_] = 0.0;
    dx[R_] = 0.0;
}

/* flood_rhs on a block of members in structure-of-arrays layout, in the
 * same operations and order, so the same bits. A member outside the
 * domain gets NaN derivatives through a factor of 1 or NaN (products by 1
 * are exact), not a branch, so the loops vectorise over members (restrict
 * on the arguments, and F and R in a loop of their own: without either,
 * gcc 12 leaves the first loop scalar), with AVX2 where the processor has
 * it (clones.h). */
SL_CLONES
static void flood_rhs_block(const sl_model_def *def, size_t n, size_t count,
                            double t, const double *restrict x,
                            const double *restrict p, const double *U,
                            double *restrict dx)
{
    const size_t c = count;
    size_t j;
    (void)def;
    (void)n;
    (void)t;
    (void)U;
    for (j = 0; j < c; j++) {
        const double G = x[G_ * c + j], D = x[D_ * c + j], H = x[H_ * c + j],
                     M = x[M_ * c + j];
        const double one = G > 0 ? 1.0 : (double)NAN;
        dx[G_ * c + j] = one * (p[RHOE * c + j] * (1.0 - D) * G);
        dx[D_ * c + j] = one * ((M - D / p[LAMBDAP * c + j]) * p[SIGMAP * c + j] / sqrt(G));
        dx[H_ * c + j] = one * (-p[KAPPAT * c + j] * H);
        dx[M_ * c + j] = one * (-p[MUS * c + j] * M);
    }
    for (j = 0; j < c; j++) {
        const double one = x[G_ * c + j] > 0 ? 1.0 : (double)NAN;
        dx[F_ * c + j] = one - 1.0;
        dx[R_ * c + j] = one - 1.0;
    }
}

static void flood_jump(const sl_model_def *def, size_t n, double t, double *x,
                       const double *p, const double *ev)
{
    const double G = x[G_], D = x[D_], H = x[H_], W = ev[0];
    const double level = W + p[XIH] * H; /* high water with the levees' rise */
    double F = 0.0, R = 0.0, S, cost = 0.0;
    (void)def;
    (void)n;
    (void)t;
    if (level > H) {
        /* 1 - exp(-y), as -expm1(-y): the same value, accurate for small y */
        F = -expm1(-level / (p[ALPHAH] * D));
        if (F > 0) {
            const double Rstar = p[EPST] * (level - H);
            const double c = p[GAMMAE] * Rstar * sqrt(G);
            /* gammaE = Inf (no levees ever) makes c infinite: neither test
             * holds and R stays 0 */
            if (F * G > c && G - F * G > c) {
                R = Rstar;
                cost = c;
            }
        }
    }
    S = R > 0 ? p[ALPHAS] * F : F;
    /* the cost term only when a levee is raised (gammaE R sqrt(G) with
     * gammaE = Inf and R = 0 is not a number) */
    x[G_] = G - F * G - cost;
    x[H_] = H + R;
    x[M_] = x[M_] + S;
    x[F_] = F;
    x[R_] = R;
}

static const char *const flood_states[] = {"G", "D", "H", "M", "F", "R"};
static const char *const flood_params[] = {"xiH",     "alphaH", "rhoE", "gammaE",
                                           "lambdaP", "sigmaP", "epsT", "kappaT",
                                           "alphaS",  "muS"};
static const char *const flood_events[] = {"W"};
static const double flood_x0[] = {0.01, 1.0, 0.0, 0.0, 0.0, 0.0};
static const double flood_p[] = {0.5, 10.0, 1.0, 0.005, 1.0,
                                 0.1, 1.1,  0.1, 0.5,   0.215};
static const double flood_lo[] = {0, 0, 0, 0, 0, 0, 0, 0, 0, 0};
static const double flood_hi[] = {HUGE_VAL, HUGE_VAL, HUGE_VAL, HUGE_VAL, HUGE_VAL,
                                  HUGE_VAL, HUGE_VAL, HUGE_VAL, 1.0,      HUGE_VAL};

const sl_model_def sl_model_flood = {
    "flood",
    "Human-flood model: settlement size G, distance D, levee height H, memory M; "
    "floods of level W (Di Baldassarre et al. 2013, form of Viglione et al. 2014)",
    6, 6, 10, 0, 1,
    flood_states, flood_params, NULL, flood_events,
    flood_x0, flood_p, flood_lo, flood_hi,
    0.1, "dopri5",
    flood_rhs, NULL, flood_jump, NULL, NULL, NULL, flood_rhs_block, 0, NULL, NULL};
