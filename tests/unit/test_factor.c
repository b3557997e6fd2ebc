/* Unit tests of factor.c and fragments.c. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/wait.h>
#include <unistd.h>

#include "factor.h"
#include "fragments.h"
#include "rng.h"
#include "spinfree.h"
#include "stream.h"
#include "tap.h"
#include "util.h"

/* A fixed pseudo-random sequence (xorshift), so runs repeat. */
static unsigned long long rng_state = 88172645463325252ULL;
static double uniform(void) { return test_uniform(&rng_state); }

static double max_abs_diff(size_t len, const double *a, const double *b)
{
    double m = 0.0;
    for (size_t i = 0; i < len; ++i) m = fmax(m, fabs(a[i] - b[i]));
    return m;
}

/* exp of [[0, t], [-t, 0]] is the plane rotation [[cos t, sin t],
 * [-sin t, cos t]] (common practice: Euler's formula for 2 x 2 generators). */
static void test_expm_plane_rotation(void)
{
    double t = 0.7, a[4] = {0, t, -t, 0}, e[4];
    double want[4] = {cos(t), sin(t), -sin(t), cos(t)};
    lam_expm(2, a, e);
    tap_near(max_abs_diff(4, e, want), 0.0, 1e-15, "exp of a 2x2 generator is the plane rotation");
    double big[4] = {0, 40.0, -40.0, 0}, want_big[4] = {cos(40.0), sin(40.0), -sin(40.0), cos(40.0)};
    lam_expm(2, big, e);
    tap_near(max_abs_diff(4, e, want_big), 0.0, 1e-12, "exp with scaling and squaring (angle 40)");
    /* exp(diag(1, -2)) = diag(e, e^-2) */
    double d[4] = {1, 0, 0, -2}, want_d[4] = {exp(1.0), 0, 0, exp(-2.0)};
    lam_expm(2, d, e);
    tap_near(max_abs_diff(4, e, want_d), 0.0, 1e-14, "exp of a diagonal matrix");
}

/* L(a, e) = d/dt exp(a + t e) at t = 0, by central differences. */
static void test_frechet_derivative(void)
{
    enum { N = 4 };
    double a[N * N], e[N * N], l[N * N], plus[N * N], minus[N * N], ap[N * N], fd[N * N];
    for (int i = 0; i < N * N; ++i) {
        a[i] = uniform();
        e[i] = uniform();
    }
    lam_expm_frechet(N, a, e, l);
    double h = 1e-5;
    for (int i = 0; i < N * N; ++i) ap[i] = a[i] + h * e[i];
    lam_expm(N, ap, plus);
    for (int i = 0; i < N * N; ++i) ap[i] = a[i] - h * e[i];
    lam_expm(N, ap, minus);
    for (int i = 0; i < N * N; ++i) fd[i] = (plus[i] - minus[i]) / (2 * h);
    tap_near(max_abs_diff(N * N, l, fd), 0.0, 1e-8, "Frechet derivative of exp matches central differences");
}

static void test_rotation_generator(void)
{
    enum { N = 5 };
    double kappa[N * (N - 1) / 2], u[N * N], utu[N * N];
    for (int i = 0; i < N * (N - 1) / 2; ++i) kappa[i] = 2.0 * uniform();
    lam_rotation_from_generator(N, kappa, u);
    for (int i = 0; i < N; ++i)
        for (int j = 0; j < N; ++j) {
            double s = 0;
            for (int p = 0; p < N; ++p) s += u[p * N + i] * u[p * N + j];
            utu[i * N + j] = s - (i == j);
        }
    double zero[N * N] = {0};
    tap_near(max_abs_diff(N * N, utu, zero), 0.0, 1e-13, "exp of an antisymmetric generator is orthogonal");
}

/* Rosenbrock's function, minimum 0 at (1, 1) (H. H. Rosenbrock, Comput.
 * J. 3, 175 (1960); from memory). */
static double rosenbrock(const double *x, double *g, void *ctx)
{
    (void)ctx;
    double a = 1 - x[0], b = x[1] - x[0] * x[0];
    g[0] = -2 * a - 400 * x[0] * b;
    g[1] = 200 * b;
    return a * a + 100 * b * b;
}

static void test_lbfgs(void)
{
    double x[2] = {-1.2, 1.0}, f;
    int it = lam_lbfgs(2, x, rosenbrock, NULL, 1000, 1e-10, &f);
    tap_near(x[0], 1.0, 1e-6, "L-BFGS finds the Rosenbrock minimum x");
    tap_near(x[1], 1.0, 1e-6, "L-BFGS finds the Rosenbrock minimum y");
    tap_ok(it > 5 && it < 1000, "L-BFGS iterations within bounds");
}

/* A random tensor with the 8-fold symmetry of real orbitals. */
static void random_symmetric_tensor(int n, double *g, int positive)
{
    size_t nn = (size_t)n * n;
    memset(g, 0, nn * nn * sizeof(double));
    /* sum_k c_k vec(A_k) vec(A_k)^T with symmetric A_k: pair symmetric
     * and (pq|rs) = (qp|rs); positive semidefinite when every c_k > 0. */
    for (int k = 0; k < 2 * n; ++k) {
        double *a = lam_malloc(nn * sizeof(double));
        for (int p = 0; p < n; ++p)
            for (int q = p; q < n; ++q) a[p * n + q] = a[q * n + p] = uniform();
        double c = positive ? fabs(uniform()) + 0.1 : uniform();
        for (size_t x = 0; x < nn; ++x)
            for (size_t y = 0; y < nn; ++y) g[x * nn + y] += c * a[x] * a[y];
        free(a);
    }
}

/* The fit of a fixed residual g at rotation u0: the full one (x = kappa,
 * then l) or the reduced one, with l eliminated (x = kappa). */
typedef struct {
    int n, reduced;
    const double *g, *u0;
} fit;

static double fit_value(const fit *f, const double *x, double *grad)
{
    return f->reduced ? lam_fragment_fit_reduced(f->n, f->g, f->u0, x, grad)
                      : lam_fragment_fit(f->n, f->g, f->u0, x, grad);
}

/* The largest gap between the analytic gradient of f at x and central
 * differences (x is left as it was). */
static double gradient_gap(const fit *f, double *x, int dim)
{
    double grad[64], worst = 0.0, h = 1e-6;
    if (dim > 64) return INFINITY; /* more than these tests need */
    fit_value(f, x, grad);
    for (int i = 0; i < dim; ++i) {
        double save = x[i];
        x[i] = save + h;
        double fp = fit_value(f, x, NULL);
        x[i] = save - h;
        double fm = fit_value(f, x, NULL);
        x[i] = save;
        worst = fmax(worst, fabs((fp - fm) / (2 * h) - grad[i]));
    }
    return worst;
}

/* Analytic gradient of the full-rank fit against central differences. */
static void test_fit_gradient(void)
{
    enum { N = 3, NK = 3, NL = 6, DIM = NK + NL };
    double g[N * N * N * N], u0[N * N], x[DIM];
    random_symmetric_tensor(N, g, 0);
    double k0[NK] = {0.3, -0.2, 0.5};
    lam_rotation_from_generator(N, k0, u0);
    for (int i = 0; i < DIM; ++i) x[i] = 0.5 * uniform();
    fit full = {N, 0, g, u0}, reduced = {N, 1, g, u0};
    tap_near(gradient_gap(&full, x, DIM), 0.0, 1e-6,
             "full-rank fit: analytic gradient matches central differences");

    double kappa[NK];
    for (int i = 0; i < NK; ++i) kappa[i] = 0.4 * uniform();
    tap_near(gradient_gap(&reduced, kappa, NK), 0.0, 1e-6,
             "reduced fit (l eliminated): gradient matches central differences");
    /* Eliminating l can only lower the objective at the same rotation. */
    double f0 = fit_value(&reduced, kappa, NULL);
    for (int i = 0; i < DIM; ++i) x[i] = i < NK ? kappa[i] : 0.5 * uniform();
    tap_ok(f0 <= lam_fragment_fit(N, g, u0, x, NULL), "reduced fit is the minimum over l");
}

/* A factorization that must succeed: a failure ends the test with its message. */
static lam_fragments *factor_or_die(const lam_spinfree *sf, const lam_factor_options *o, lam_factor_info *info)
{
    lam_fragments *fr;
    lam_error err;
    if (lam_factor(sf, o, info, &fr, &err)) lam_error_exit(&err);
    return fr;
}

static lam_spinfree *random_operator(int n, int positive)
{
    lam_spinfree *sf = lam_spinfree_new(n);
    sf->e0 = 0.5;
    for (int p = 0; p < n; ++p)
        for (int q = p; q < n; ++q) LAM_H(sf, p, q) = LAM_H(sf, q, p) = uniform();
    random_symmetric_tensor(n, sf->g, positive);
    return sf;
}

/* A random operator on n orbitals into *sf and its factorization by
 * method with residual tolerance tol (< 0: the method's default). */
static lam_fragments *factor_random(int n, int positive, lam_factor_method method, double tol,
                                    lam_spinfree **sf, lam_factor_info *info)
{
    lam_factor_options o;
    *sf = random_operator(n, positive);
    lam_factor_defaults(&o, method, n);
    if (tol >= 0) o.tol = tol;
    return factor_or_die(*sf, &o, info);
}

/* Exact factorization rebuilds the integrals; truncation stays within the
 * bound |L_pq| <= 1 gives (largest integral error <= discarded weight). */
static void test_double_factorization(void)
{
    int n = 4;
    lam_spinfree *sf;
    lam_factor_info info;
    lam_fragments *fr = factor_random(n, 1, LAM_FACTOR_DOUBLE, -1, &sf, &info);
    tap_ok(info.integral_max_error < 1e-12, "double factorization rebuilds the integrals");
    tap_near(info.constant_error, 0.0, 1e-12, "double factorization keeps the constant");
    tap_ok(info.factors_kept <= n * (n + 1) / 2, "at most n(n+1)/2 factors");
    /* The identity term is the Majorana constant (common practice: what
     * a Pauli mapping puts on the identity). */
    tap_near(fr->constant, lam_spinfree_constant(sf), 1e-12,
             "identity coefficient equals the Majorana constant");

    lam_fragments_stats s = lam_fragments_stats_of(fr);
    size_t pairs = (size_t)(2 * n) * (2 * n - 1) / 2;
    tap_ok(s.unitaries <= (size_t)2 * n + pairs * (size_t)info.factors_kept,
           "unitary count: 2n reflections + (2n choose 2) products per fragment at most");
    lam_fragments_free(fr);

    lam_factor_options o;
    lam_factor_defaults(&o, LAM_FACTOR_DOUBLE, n);
    o.tol = 0.5;
    fr = factor_or_die(sf, &o, &info);
    tap_ok(info.discarded_weight > 0 && info.discarded_weight <= 0.5, "truncation drops weight <= tol");
    tap_ok(info.integral_max_error <= info.discarded_weight + 1e-12,
           "largest integral error within the discarded weight");
    lam_fragments_free(fr);
    lam_spinfree_free(sf);
}

static void test_full_rank(void)
{
    lam_spinfree *sf;
    lam_factor_info info;
    lam_fragments *fr = factor_random(3, 0, LAM_FACTOR_FULL_RANK, 1e-8, &sf, &info);
    tap_ok(info.residual_norm <= 1e-8, "full rank reaches the residual tolerance");
    tap_ok(info.integral_max_error <= 1e-8, "full rank: integrals rebuilt to the tolerance");
    tap_near(fr->constant, lam_spinfree_constant(sf), 1e-7, "full rank: Majorana constant");
    lam_fragments_free(fr);
    lam_spinfree_free(sf);
}

/* R_0a R_0b = (1 - 2 n_0a)(1 - 2 n_0b) = 1 - 2 N_0 + 4 n_0a n_0b, and
 * n_0a n_0b = 1/2 e_0000 (the spin-summed e_pqrs of lamina-stream(5)). */
static void test_to_spinfree_algebra(void)
{
    lam_fragments *fr = lam_fragments_new(1, 1);
    lam_fragments_add(fr, 0, 1, 0, 0.25);
    lam_fragments_merge(fr);
    lam_spinfree *sf;
    lam_error err;
    tap_ok(lam_fragments_to_spinfree(fr, NULL, &sf, &err) == 0, "R_0a R_0b is spin-free");
    tap_near(sf->e0, 0.25, 0, "R_0a R_0b: constant c");
    tap_near(LAM_H(sf, 0, 0), -0.5, 0, "R_0a R_0b: -2c N_0");
    tap_near(LAM_G(sf, 0, 0, 0, 0), 1.0, 0, "R_0a R_0b: (00|00) = 4c");
    lam_spinfree_free(sf);
    lam_fragments_free(fr);
}

static void test_stream_round_trip(void)
{
    int n = 3;
    lam_spinfree *sf;
    lam_factor_info info;
    lam_fragments *fr = factor_random(n, 1, LAM_FACTOR_DOUBLE, -1, &sf, &info);
    char path[] = "/tmp/test_factor_XXXXXX";
    int fd = mkstemp(path);
    tap_ok(fd >= 0, "temporary file");
    if (fd < 0) return;
    lam_meta meta;
    lam_meta_init(&meta);
    lam_fragments_describe(fr, &meta);
    lam_writer *w;
    lam_error err;
    lam_reader *r;
    lam_kind kind;
    lam_fragments *back;
    if (lam_writer_open(path, 0, &w, &err)) exit(74);
    lam_writer_header(w, LAM_KIND_FRAGMENTS, &meta, "test_factor");
    lam_fragments_write_terms(w, fr);
    tap_ok(lam_writer_close(w, &err) == 0, "written");
    if (lam_reader_open(path, &r, &err)) exit(66);
    tap_ok(lam_reader_kind(r, &kind, &err) == 0 && kind == LAM_KIND_FRAGMENTS,
           "kind fragments from the header");
    if (lam_fragments_read(r, &back, &err)) {
        printf("# %s\n", err.msg);
        exit(65);
    }
    lam_reader_close(r);
    lam_fragments_stats a = lam_fragments_stats_of(fr), b = lam_fragments_stats_of(back);
    tap_ok(a.unitaries == b.unitaries && a.terms == b.terms, "round trip keeps the terms");
    tap_near(b.lambda, a.lambda, 0, "round trip keeps lambda exactly (17 digits)");
    tap_near(b.constant, a.constant, 0, "round trip keeps the constant exactly");
    lam_spinfree *rebuilt;
    if (lam_fragments_to_spinfree(back, path, &rebuilt, &err)) exit(65);
    size_t n4 = (size_t)n * n * n * n;
    tap_ok(max_abs_diff(n4, rebuilt->g, sf->g) < 1e-12 &&
               max_abs_diff((size_t)n * n, rebuilt->h, sf->h) < 1e-12,
           "stream read back rebuilds the operator");
    tap_ok(lam_fragments_parse_mode("3b", 4) == 7 && lam_fragments_parse_mode("3b", 3) == -1 &&
               lam_fragments_parse_mode("-1a", 4) == -1 && lam_fragments_parse_mode("2", 4) == -1,
           "mode tokens: 3b is 7; out of range, signed, spinless rejected");
    remove(path);
    lam_meta_free(&meta);
    lam_spinfree_free(rebuilt);
    lam_fragments_free(back);
    lam_fragments_free(fr);
    lam_spinfree_free(sf);
}


/* Read a fragments stream and rebuild its spin-free operator: 0, or the
 * error code with the message in err.  Everything is freed either way (the
 * leak checkers see a reader that forgets). */
static int read_text(const char *text, char *err, size_t errsize)
{
    char in[] = "/tmp/test_factor_in_XXXXXX";
    int fi = mkstemp(in);
    if (fi < 0) return -1;
    if (write(fi, text, strlen(text)) != (ssize_t)strlen(text)) return -1;
    close(fi);
    lam_reader *r = NULL;
    lam_fragments *fr = NULL;
    lam_spinfree *sf = NULL;
    lam_error e;
    int rc = lam_reader_open(in, &r, &e);
    if (!rc) rc = lam_fragments_read(r, &fr, &e);
    if (!rc) rc = lam_fragments_to_spinfree(fr, in, &sf, &e);
    snprintf(err, errsize, "%s", rc ? e.msg : "");
    lam_spinfree_free(sf);
    lam_fragments_free(fr);
    lam_reader_close(r);
    remove(in);
    return rc;
}

/* Full rank out of fragments is a returned data error, nothing kept. */
static void test_full_rank_error_returns(void)
{
    lam_spinfree *sf = random_operator(3, 0);
    lam_factor_options o;
    lam_factor_info info;
    lam_factor_defaults(&o, LAM_FACTOR_FULL_RANK, 3);
    o.max_fragments = 0;
    lam_fragments *fr = NULL;
    lam_error err;
    int rc = lam_factor(sf, &o, &info, &fr, &err);
    tap_ok(rc == LAM_EX_DATA && !fr && strstr(err.msg, "full-rank fragments: residual") &&
               strstr(err.msg, "after 0 fragments"),
           "full rank past max_fragments returns exit 65 with its message");
    lam_spinfree_free(sf);
}

static void expect_rejected(const char *body, const char *needle, const char *name)
{
    char text[1024], err[1024];
    snprintf(text, sizeof text,
             "#%% lamina-op 2\n#%% kind: fragments\n#%% orbitals: 2\n#%% fragments: 2\n%s#%% end\n",
             body);
    int rc = read_text(text, err, sizeof err);
    int ok = rc == 65 && strstr(err, needle);
    tap_ok(ok, name);
    if (!ok) printf("#   exit %d, stderr: %s\n", rc, err);
}

static void test_reader_rejects(void)
{
    char err[1024];
    int rc = read_text("#% lamina-op 2\n#% kind: fragments\n#% orbitals: 2\n-1.5\n"
                           "0.6 U 1 0 0\n0.8 U 1 1 0\n-0.8 U 1 0 1\n0.6 U 1 1 1\n"
                           "0.25 R 1 0a 1b\n0.25 R 1 0b 1a\n0.25 R 1 0a 1a\n0.25 R 1 0b 1b\n"
                           "0.1 R 0 1a\n0.1 R 0 1b\n#% end\n",
                           err, sizeof err);
    tap_ok(rc == 0, "a well-formed hand-made stream is accepted");
    /* each body, the words its message must hold, and what it tests */
    static const struct {
        const char *body, *needle, *name;
    } bad[] = {
        {"0.6 U 1 0 0\n0.6 U 1 1 0\n-0.8 U 1 0 1\n0.6 U 1 1 1\n0.1 R 1 0a\n", "not orthogonal",
          "a rotation that is not orthogonal is rejected"},
        {"1 U 1 0 0\n0.1 R 1 0a\n0.1 R 1 0b\n", "not orthogonal",
          "a rotation with a missing entry is rejected"},
        {"1 U 1 0 0\n1 U 1 0 0\n", "given twice", "a repeated rotation entry is rejected"},
        {"0.1 R 0 2a\n", "rotated spin orbital", "an orbital out of range is rejected"},
        {"0.1 R 0 1c\n", "rotated spin orbital", "a spin other than a/b is rejected"},
        {"0.1 R 0 1a 1a\n", "identity", "R R of one spin orbital is rejected"},
        {"0.1 R 2 1a\n", "out of range", "a fragment beyond 'fragments:' is rejected"},
        {"0.1 Q 0 1a\n", "fragments line", "an unknown line type is rejected"},
        {"0.1 R 0\n", "reflection line", "a reflection without a mode is rejected"},
        {"0.1 R 0 0a\n0.2 R 0 0b\n", "not spin-free",
          "different alpha and beta coefficients are not spin-free"},
        {"0.1 R 0 0a 1a\n0.1 R 0 0b 1b\n0.2 R 0 0a 1b\n0.2 R 0 0b 1a\n", "not spin-free",
          "same-spin and opposite-spin pairs that differ are not spin-free"},
    };
    for (size_t i = 0; i < sizeof bad / sizeof bad[0]; ++i)
        expect_rejected(bad[i].body, bad[i].needle, bad[i].name);
}

int main(void)
{
    test_expm_plane_rotation();
    test_frechet_derivative();
    test_rotation_generator();
    test_lbfgs();
    test_fit_gradient();
    test_double_factorization();
    test_full_rank();
    test_full_rank_error_returns();
    test_to_spinfree_algebra();
    test_stream_round_trip();
    test_reader_rejects();
    return tap_done();
}
