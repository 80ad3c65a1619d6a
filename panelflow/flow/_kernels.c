/*
 * Compiled influence kernels of panelflow (the pure-numpy versions in influence.py compute the
 * same formulas and are the reference the tests compare against).
 *
 * Why compiled: per point-panel pair the panel method needs one logarithm and one arctangent
 * (shared between the two panels that meet at a node) and about thirty multiplications. numpy
 * evaluates each of those as a separate pass over a temporary array; here they are fused into
 * one loop per point, with the logarithm and arctangent written out below as branch-free
 * polynomials so that the compiler can evaluate four pairs at a time in vector registers.
 *
 * Numerical functions (our own, from their Taylor series after argument reduction):
 *   log x   = e ln 2 + 2 atanh s,  x = 2^e m,  m in [sqrt(1/2), sqrt 2),  s = (m - 1)/(m + 1),
 *             |s| <= 0.1716, series to s^23 (truncation below 1e-17 relative);
 *   atan t  = atan c + atan u,  u = (t - c)/(1 + t c),  c = 0 or 1/sqrt 3 (atan c = pi/6),
 *             |u| <= tan(pi/12) = 0.268, series to u^27 (truncation below 1e-17 relative);
 *   atan2   from atan of min/max of |x|, |y| and the quadrant, with C's signs at zero.
 * Accuracy (measured in tests/test_kernels.py against numpy): a few units in the last place.
 *
 * Built by setuptools as an optional extension (setup.py); where it cannot be built, panelflow
 * runs the numpy versions. Every function releases the GIL, so panelflow's threads run blocks of
 * points concurrently.
 */
#define PY_SSIZE_T_CLEAN
#include <Python.h>
#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#if defined(__GNUC__) && (defined(__x86_64__) || defined(_M_X64)) && !defined(__APPLE__) && \
    !defined(PANELFLOW_NO_CLONES)
/* one copy of each hot function for AVX2 + FMA processors, one for any x86-64; the loader picks */
#define PF_CLONES __attribute__((target_clones("arch=x86-64-v3", "default")))
#else
#define PF_CLONES
#endif

#define PF_PI 0x1.921fb54442d18p+1
#define PF_PI_2 0x1.921fb54442d18p+0
#define PF_TWO_PI 0x1.921fb54442d18p+2
#define PF_PI_6 0x1.0c152382d7366p-1
#define PF_INV_SQRT3 0x1.279a74590331cp-1
#define PF_TAN_PI_12 0x1.126145e9ecd56p-2
#define PF_SQRT2 0x1.6a09e667f3bcdp+0
/* ln 2 split so that e * LN2_HI is exact for any binary exponent e */
#define PF_LN2_HI 0x1.62e42p-1
#define PF_LN2_LO 0x1.fdf473de6af28p-22
#define PF_INV_TWO_PI (1.0 / PF_TWO_PI)
/* smallest squared distance given to the logarithm: a point on a node gets a large finite
   logarithm, which always meets a factor that is exactly zero there */
#define PF_TINY 1e-300

static inline double pf_log(double x)
{
    /* x > 0 and normal (callers clamp to PF_TINY) */
    uint64_t u;
    memcpy(&u, &x, sizeof u);
    uint64_t mbits = (u & 0x000fffffffffffffULL) | 0x3ff0000000000000ULL;
    double m;
    memcpy(&m, &mbits, sizeof m);
    /* biased exponent as a double without an integer conversion: 2^52 + e read as a double */
    uint64_t ebits = (u >> 52) | 0x4330000000000000ULL;
    double e;
    memcpy(&e, &ebits, sizeof e);
    e -= 4503599627370496.0 + 1023.0;
    int big = m > PF_SQRT2;
    m = big ? 0.5 * m : m;
    e = big ? e + 1.0 : e;
    double f = m - 1.0;
    double s = f / (m + 1.0);
    double s2 = s * s;
    double p = 1.0 / 23.0;
    p = p * s2 + 1.0 / 21.0;
    p = p * s2 + 1.0 / 19.0;
    p = p * s2 + 1.0 / 17.0;
    p = p * s2 + 1.0 / 15.0;
    p = p * s2 + 1.0 / 13.0;
    p = p * s2 + 1.0 / 11.0;
    p = p * s2 + 1.0 / 9.0;
    p = p * s2 + 1.0 / 7.0;
    p = p * s2 + 1.0 / 5.0;
    p = p * s2 + 1.0 / 3.0;
    double r = 2.0 * s * s2 * p + e * PF_LN2_LO;
    return e * PF_LN2_HI + (2.0 * s + r);
}

static inline double pf_atan2(double y, double x)
{
    double ax = fabs(x), ay = fabs(y);
    double hi = ax > ay ? ax : ay;
    double lo = ax > ay ? ay : ax;
    int big = lo > PF_TAN_PI_12 * hi;
    double num = big ? lo - PF_INV_SQRT3 * hi : lo;
    double den = big ? hi + PF_INV_SQRT3 * lo : hi;
    den = den > 0.0 ? den : 1.0; /* x = y = 0: the angle 0, as C's atan2 */
    double t = num / den;
    double t2 = t * t;
    double q = -1.0 / 27.0;
    q = q * t2 + 1.0 / 25.0;
    q = q * t2 - 1.0 / 23.0;
    q = q * t2 + 1.0 / 21.0;
    q = q * t2 - 1.0 / 19.0;
    q = q * t2 + 1.0 / 17.0;
    q = q * t2 - 1.0 / 15.0;
    q = q * t2 + 1.0 / 13.0;
    q = q * t2 - 1.0 / 11.0;
    q = q * t2 + 1.0 / 9.0;
    q = q * t2 - 1.0 / 7.0;
    q = q * t2 + 1.0 / 5.0;
    q = q * t2 - 1.0 / 3.0;
    double r = t + t * t2 * q;
    r = big ? PF_PI_6 + r : r;
    r = ay > ax ? PF_PI_2 - r : r;
    r = copysign(1.0, x) < 0.0 ? PF_PI - r : r; /* x < 0, or x = -0 */
    return copysign(r, y);
}

/* arg(zeta) - arg(zeta - L) from the two nodes' angles, into (-pi, pi] */
static inline double pf_wrap(double d)
{
    d = d > PF_PI ? d - PF_TWO_PI : d;
    return d <= -PF_PI ? d + PF_TWO_PI : d;
}

/* ------------------------------------------------------------------------- buffers */
typedef struct {
    Py_buffer view;
    int held;
} pf_buf;

static int pf_get(PyObject *obj, pf_buf *b, int writable, Py_ssize_t itemsize, const char *name)
{
    int flags = PyBUF_C_CONTIGUOUS | PyBUF_FORMAT | (writable ? PyBUF_WRITABLE : 0);
    if (PyObject_GetBuffer(obj, &b->view, flags) < 0)
        return -1;
    b->held = 1;
    if (b->view.itemsize != itemsize) {
        PyErr_Format(PyExc_TypeError, "%s: expected items of %zd bytes", name, itemsize);
        return -1;
    }
    return 0;
}

static void pf_release(pf_buf *bufs, int n)
{
    for (int i = 0; i < n; i++)
        if (bufs[i].held)
            PyBuffer_Release(&bufs[i].view);
}

#define PF_LEN(b) ((b).view.len / (b).view.itemsize)
#define PF_D(b) ((double *)(b).view.buf)
#define PF_I(b) ((int64_t *)(b).view.buf)

/* ------------------------------------------------------------------------- math checks */
PF_CLONES
static void log_loop(const double *restrict x, double *restrict out, Py_ssize_t n)
{
    for (Py_ssize_t i = 0; i < n; i++)
        out[i] = pf_log(x[i] > PF_TINY ? x[i] : PF_TINY);
}

PF_CLONES
static void atan2_loop(const double *restrict y, const double *restrict x, double *restrict out, Py_ssize_t n)
{
    for (Py_ssize_t i = 0; i < n; i++)
        out[i] = pf_atan2(y[i], x[i]);
}

static PyObject *py_log(PyObject *self, PyObject *args)
{
    PyObject *o[2];
    pf_buf b[2] = {0};
    if (!PyArg_ParseTuple(args, "OO", &o[0], &o[1]))
        return NULL;
    if (pf_get(o[0], &b[0], 0, 8, "x") || pf_get(o[1], &b[1], 1, 8, "out"))
        goto fail;
    if (PF_LEN(b[1]) != PF_LEN(b[0])) {
        PyErr_SetString(PyExc_ValueError, "out: wrong length");
        goto fail;
    }
    Py_BEGIN_ALLOW_THREADS
    log_loop(PF_D(b[0]), PF_D(b[1]), PF_LEN(b[0]));
    Py_END_ALLOW_THREADS
    pf_release(b, 2);
    Py_RETURN_NONE;
fail:
    pf_release(b, 2);
    return NULL;
}

static PyObject *py_atan2(PyObject *self, PyObject *args)
{
    PyObject *o[3];
    pf_buf b[3] = {0};
    if (!PyArg_ParseTuple(args, "OOO", &o[0], &o[1], &o[2]))
        return NULL;
    if (pf_get(o[0], &b[0], 0, 8, "y") || pf_get(o[1], &b[1], 0, 8, "x") ||
        pf_get(o[2], &b[2], 1, 8, "out"))
        goto fail;
    if (PF_LEN(b[1]) != PF_LEN(b[0]) || PF_LEN(b[2]) != PF_LEN(b[0])) {
        PyErr_SetString(PyExc_ValueError, "y, x, out: lengths differ");
        goto fail;
    }
    Py_BEGIN_ALLOW_THREADS
    atan2_loop(PF_D(b[0]), PF_D(b[1]), PF_D(b[2]), PF_LEN(b[0]));
    Py_END_ALLOW_THREADS
    pf_release(b, 3);
    Py_RETURN_NONE;
fail:
    pf_release(b, 3);
    return NULL;
}

/* ------------------------------------------------------------------------- per-pair psi */
/*
 * Stream function per unit nodal vorticity of linear vortex panels (start-node and end-node
 * coefficients), every point against every panel: the closed form of influence.vortex_psi.
 */
PF_CLONES
static void vortex_psi_rows(const double *restrict px, const double *restrict py, Py_ssize_t n,
                            const double *restrict z1x, const double *restrict z1y, const double *restrict tx,
                            const double *restrict ty, const double *restrict len, Py_ssize_t p,
                            double *restrict a_out, double *restrict b_out)
{
    for (Py_ssize_t i = 0; i < n; i++) {
        double *a = a_out + i * p, *b = b_out + i * p;
        for (Py_ssize_t j = 0; j < p; j++) {
            double dx = px[i] - z1x[j], dy = py[i] - z1y[j];
            double x = dx * tx[j] + dy * ty[j];
            double y = dy * tx[j] - dx * ty[j];
            double L = len[j];
            double xm = x - L;
            double y2 = y * y;
            double r1 = x * x + y2, r2 = xm * xm + y2;
            double l1 = 0.5 * pf_log(r1 > PF_TINY ? r1 : PF_TINY);
            double l2 = 0.5 * pf_log(r2 > PF_TINY ? r2 : PF_TINY);
            double dt = pf_atan2(-y * L, x * xm + y2);
            double dg = x * l1 - xm * l2 - y * dt - L;
            double i1 = (0.5 * (x * x - y2) * l1 - 0.5 * (xm * xm + 2.0 * L * xm - y2) * l2 -
                         x * y * dt - 0.5 * x * L - 0.25 * L * L) / L;
            a[j] = (i1 - dg) * PF_INV_TWO_PI;
            b[j] = -i1 * PF_INV_TWO_PI;
        }
    }
}

static PyObject *py_vortex_psi(PyObject *self, PyObject *args)
{
    PyObject *o[9];
    pf_buf b[9] = {0};
    static const char *names[9] = {"px", "py", "z1x", "z1y", "tx", "ty", "length", "a", "b"};
    if (!PyArg_ParseTuple(args, "OOOOOOOOO", &o[0], &o[1], &o[2], &o[3], &o[4], &o[5], &o[6],
                          &o[7], &o[8]))
        return NULL;
    for (int k = 0; k < 9; k++)
        if (pf_get(o[k], &b[k], k >= 7, 8, names[k]))
            goto fail;
    Py_ssize_t n = PF_LEN(b[0]), p = PF_LEN(b[2]);
    if (PF_LEN(b[1]) != n || PF_LEN(b[3]) != p || PF_LEN(b[4]) != p || PF_LEN(b[5]) != p ||
        PF_LEN(b[6]) != p || PF_LEN(b[7]) != n * p || PF_LEN(b[8]) != n * p) {
        PyErr_SetString(PyExc_ValueError, "vortex_psi: inconsistent lengths");
        goto fail;
    }
    Py_BEGIN_ALLOW_THREADS
    vortex_psi_rows(PF_D(b[0]), PF_D(b[1]), n, PF_D(b[2]), PF_D(b[3]), PF_D(b[4]), PF_D(b[5]),
                    PF_D(b[6]), p, PF_D(b[7]), PF_D(b[8]));
    Py_END_ALLOW_THREADS
    pf_release(b, 9);
    Py_RETURN_NONE;
fail:
    pf_release(b, 9);
    return NULL;
}

/* ------------------------------------------------------------------------- node-shared */
/*
 * Geometry of "chains": a body's panels in order, each ending where the next starts. Chain c has
 * panels panel_off[c] .. panel_off[c] + count[c] - 1 and chain nodes node_off[c] ..
 * node_off[c] + count[c] (one more node than panels; a closed loop repeats its first node at the
 * end). The per-node logarithm and angle are computed once and shared by the two panels meeting
 * there.
 */
typedef struct {
    const double *nx, *ny;               /* chain nodes */
    const double *tx, *ty, *len;         /* panels */
    const int64_t *panel_off, *node_off, *count;
    Py_ssize_t n_chains, n_nodes, n_panels;
} pf_chains;

PF_CLONES
static void node_values(double px, double py, const pf_chains *g, double *lg, double *th)
{
    for (Py_ssize_t k = 0; k < g->n_nodes; k++) {
        double dx = px - g->nx[k], dy = py - g->ny[k];
        double r2 = dx * dx + dy * dy;
        lg[k] = 0.5 * pf_log(r2 > PF_TINY ? r2 : PF_TINY);
        th[k] = pf_atan2(dy, dx);
    }
}

/* psi coefficients (a: start node, b: end node) of one chain's panels at one point */
PF_CLONES
static void chain_psi(double px, double py, const double *restrict nx, const double *restrict ny,
                      const double *restrict tx, const double *restrict ty, const double *restrict len, const double *restrict lg,
                      const double *restrict th, Py_ssize_t cnt, double *restrict a, double *restrict b)
{
    for (Py_ssize_t j = 0; j < cnt; j++) {
        double dxs = px - nx[j], dys = py - ny[j];
        double dxe = px - nx[j + 1], dye = py - ny[j + 1];
        double t_x = tx[j], t_y = ty[j], L = len[j];
        /* local coordinates from each end node: exactly zero at that node */
        double x1 = dxs * t_x + dys * t_y, y1 = dys * t_x - dxs * t_y;
        double x2 = dxe * t_x + dye * t_y, y2 = dye * t_x - dxe * t_y;
        double l1 = lg[j], l2 = lg[j + 1];
        double dt = pf_wrap(th[j] - th[j + 1]);
        double dg = x1 * l1 - x2 * l2 - y1 * dt - L;
        double i1 = (0.5 * (x1 * x1 - y1 * y1) * l1 - 0.5 * (x2 * x2 + 2.0 * L * x2 - y2 * y2) * l2 -
                     x1 * y1 * dt - 0.5 * x1 * L - 0.25 * L * L) / L;
        a[j] = (i1 - dg) * PF_INV_TWO_PI;
        b[j] = -i1 * PF_INV_TWO_PI;
    }
}

/*
 * Rows of the stream-function matrix: out[i, col] += coefficient of node col, where chain c's
 * panel j starts at column col_start[panel] and ends at column col_end[panel].
 */
static void psi_node_rows(const double *px, const double *py, Py_ssize_t n, const pf_chains *g,
                          const int64_t *col_start, const int64_t *col_end, double *out,
                          Py_ssize_t stride, double *work)
{
    double *lg = work, *th = work + g->n_nodes, *a = th + g->n_nodes, *b = a + g->n_panels;
    for (Py_ssize_t i = 0; i < n; i++) {
        double *row = out + i * stride;
        node_values(px[i], py[i], g, lg, th);
        for (Py_ssize_t c = 0; c < g->n_chains; c++) {
            Py_ssize_t po = g->panel_off[c], no = g->node_off[c];
            chain_psi(px[i], py[i], g->nx + no, g->ny + no, g->tx + po, g->ty + po, g->len + po,
                      lg + no, th + no, g->count[c], a + po, b + po);
        }
        for (Py_ssize_t j = 0; j < g->n_panels; j++) {
            row[col_start[j]] += a[j];
            row[col_end[j]] += b[j];
        }
    }
}

/* u - i v of one chain's panels at one point, summed with the strengths of k solutions */
PF_CLONES
static void chain_velocity(double px, double py, const double *restrict nx, const double *restrict ny,
                           const double *restrict tx, const double *restrict ty, const double *restrict len,
                           const double *restrict lg, const double *restrict th, Py_ssize_t cnt, double *restrict lr,
                           double *restrict li, double *restrict jr, double *restrict ji)
{
    for (Py_ssize_t j = 0; j < cnt; j++) {
        double dxs = px - nx[j], dys = py - ny[j];
        double t_x = tx[j], t_y = ty[j], L = len[j];
        double x1 = dxs * t_x + dys * t_y, y1 = dys * t_x - dxs * t_y;
        /* Lambda = log(zeta) - log(zeta - L) (cut on the panel); j1 = (zeta Lambda - L) / L */
        double lam_r = lg[j] - lg[j + 1];
        double lam_i = pf_wrap(th[j] - th[j + 1]);
        lr[j] = lam_r;
        li[j] = lam_i;
        jr[j] = (x1 * lam_r - y1 * lam_i) / L - 1.0;
        ji[j] = (x1 * lam_i + y1 * lam_r) / L;
    }
}

/* fixed-order sums in four lanes: vectorisable, and the same bits on every run */
PF_CLONES
static void combine(const double *restrict lr, const double *restrict li, const double *restrict jr, const double *restrict ji,
                    const double *restrict c, Py_ssize_t p, double *restrict w)
{
    /* c holds, per solution, four rows of p: start-strength re, im; delta re, im */
    const double *sr = c, *si = c + p, *dr = c + 2 * p, *di = c + 3 * p;
    double re[4] = {0, 0, 0, 0}, im[4] = {0, 0, 0, 0};
    Py_ssize_t j = 0;
    for (; j + 4 <= p; j += 4) {
        for (int q = 0; q < 4; q++) {
            Py_ssize_t k = j + q;
            re[q] += lr[k] * sr[k] - li[k] * si[k] + jr[k] * dr[k] - ji[k] * di[k];
            im[q] += lr[k] * si[k] + li[k] * sr[k] + jr[k] * di[k] + ji[k] * dr[k];
        }
    }
    for (int q = 0; j < p; j++, q++) {
        re[q] += lr[j] * sr[j] - li[j] * si[j] + jr[j] * dr[j] - ji[j] * di[j];
        im[q] += lr[j] * si[j] + li[j] * sr[j] + jr[j] * di[j] + ji[j] * dr[j];
    }
    w[0] = (re[0] + re[1]) + (re[2] + re[3]);
    w[1] = (im[0] + im[1]) + (im[2] + im[3]);
}

static void velocity_rows(const double *px, const double *py, Py_ssize_t n, const pf_chains *g,
                          const double *coef, Py_ssize_t k, double *out, double *work)
{
    Py_ssize_t p = g->n_panels;
    double *lg = work, *th = work + g->n_nodes;
    double *lr = th + g->n_nodes, *li = lr + p, *jr = li + p, *ji = jr + p;
    for (Py_ssize_t i = 0; i < n; i++) {
        node_values(px[i], py[i], g, lg, th);
        for (Py_ssize_t c = 0; c < g->n_chains; c++) {
            Py_ssize_t po = g->panel_off[c], no = g->node_off[c];
            chain_velocity(px[i], py[i], g->nx + no, g->ny + no, g->tx + po, g->ty + po,
                           g->len + po, lg + no, th + no, g->count[c], lr + po, li + po, jr + po,
                           ji + po);
        }
        for (Py_ssize_t s = 0; s < k; s++)
            combine(lr, li, jr, ji, coef + s * 4 * p, p, out + (i * k + s) * 2);
    }
}

/* parse the common chain arguments; bufs[0..8] */
static int pf_chains_from(PyObject **o, pf_buf *b, pf_chains *g)
{
    static const char *names[9] = {"node_x", "node_y", "tx", "ty", "length", "panel_off",
                                   "node_off", "count", "-"};
    for (int k = 0; k < 8; k++)
        if (pf_get(o[k], &b[k], 0, 8, names[k]))
            return -1;
    g->nx = PF_D(b[0]);
    g->ny = PF_D(b[1]);
    g->tx = PF_D(b[2]);
    g->ty = PF_D(b[3]);
    g->len = PF_D(b[4]);
    g->panel_off = PF_I(b[5]);
    g->node_off = PF_I(b[6]);
    g->count = PF_I(b[7]);
    g->n_nodes = PF_LEN(b[0]);
    g->n_panels = PF_LEN(b[2]);
    g->n_chains = PF_LEN(b[5]);
    if (PF_LEN(b[1]) != g->n_nodes || PF_LEN(b[3]) != g->n_panels ||
        PF_LEN(b[4]) != g->n_panels || PF_LEN(b[6]) != g->n_chains ||
        PF_LEN(b[7]) != g->n_chains) {
        PyErr_SetString(PyExc_ValueError, "chains: inconsistent lengths");
        return -1;
    }
    Py_ssize_t panels = 0, nodes = 0;
    for (Py_ssize_t c = 0; c < g->n_chains; c++) {
        if (g->count[c] < 1 || g->panel_off[c] != panels || g->node_off[c] != nodes) {
            PyErr_SetString(PyExc_ValueError, "chains: offsets must follow the counts");
            return -1;
        }
        panels += g->count[c];
        nodes += g->count[c] + 1;
    }
    if (panels != g->n_panels || nodes != g->n_nodes) {
        PyErr_SetString(PyExc_ValueError, "chains: counts do not match the arrays");
        return -1;
    }
    return 0;
}

static PyObject *py_psi_nodes(PyObject *self, PyObject *args)
{
    /* px, py, 8 chain arrays, col_start, col_end, out (rows x stride) */
    PyObject *o[13];
    pf_buf b[13] = {0};
    Py_ssize_t stride;
    double *work = NULL;
    if (!PyArg_ParseTuple(args, "OOOOOOOOOOOOOn", &o[0], &o[1], &o[2], &o[3], &o[4], &o[5],
                          &o[6], &o[7], &o[8], &o[9], &o[10], &o[11], &o[12], &stride))
        return NULL;
    pf_chains g;
    if (pf_get(o[0], &b[0], 0, 8, "px") || pf_get(o[1], &b[1], 0, 8, "py") ||
        pf_chains_from(o + 2, b + 2, &g) || pf_get(o[10], &b[10], 0, 8, "col_start") ||
        pf_get(o[11], &b[11], 0, 8, "col_end") || pf_get(o[12], &b[12], 1, 8, "out"))
        goto fail;
    Py_ssize_t n = PF_LEN(b[0]);
    if (PF_LEN(b[1]) != n || PF_LEN(b[10]) != g.n_panels || PF_LEN(b[11]) != g.n_panels ||
        stride < 1 || PF_LEN(b[12]) < n * stride) {
        PyErr_SetString(PyExc_ValueError, "psi_nodes: inconsistent lengths");
        goto fail;
    }
    for (Py_ssize_t j = 0; j < g.n_panels; j++) {
        int64_t cs = PF_I(b[10])[j], ce = PF_I(b[11])[j];
        if (cs < 0 || cs >= stride || ce < 0 || ce >= stride) {
            PyErr_SetString(PyExc_ValueError, "psi_nodes: column out of range");
            goto fail;
        }
    }
    work = malloc(sizeof(double) * (2 * g.n_nodes + 2 * g.n_panels + 1));
    if (!work) {
        PyErr_NoMemory();
        goto fail;
    }
    Py_BEGIN_ALLOW_THREADS
    psi_node_rows(PF_D(b[0]), PF_D(b[1]), n, &g, PF_I(b[10]), PF_I(b[11]), PF_D(b[12]), stride,
                  work);
    Py_END_ALLOW_THREADS
    free(work);
    pf_release(b, 13);
    Py_RETURN_NONE;
fail:
    free(work);
    pf_release(b, 13);
    return NULL;
}

static PyObject *py_velocity_nodes(PyObject *self, PyObject *args)
{
    /* px, py, 8 chain arrays, coef (k x 4 x p), out (n x k complex as 2 doubles) */
    PyObject *o[12];
    pf_buf b[12] = {0};
    double *work = NULL;
    if (!PyArg_ParseTuple(args, "OOOOOOOOOOOO", &o[0], &o[1], &o[2], &o[3], &o[4], &o[5], &o[6],
                          &o[7], &o[8], &o[9], &o[10], &o[11]))
        return NULL;
    pf_chains g;
    if (pf_get(o[0], &b[0], 0, 8, "px") || pf_get(o[1], &b[1], 0, 8, "py") ||
        pf_chains_from(o + 2, b + 2, &g) || pf_get(o[10], &b[10], 0, 8, "coef") ||
        pf_get(o[11], &b[11], 1, 8, "out"))
        goto fail;
    Py_ssize_t n = PF_LEN(b[0]), p = g.n_panels;
    Py_ssize_t k = p ? PF_LEN(b[10]) / (4 * p) : 0;
    if (PF_LEN(b[1]) != n || k < 1 || PF_LEN(b[10]) != 4 * p * k || PF_LEN(b[11]) != 2 * n * k) {
        PyErr_SetString(PyExc_ValueError, "velocity_nodes: inconsistent lengths");
        goto fail;
    }
    work = malloc(sizeof(double) * (2 * g.n_nodes + 4 * p + 1));
    if (!work) {
        PyErr_NoMemory();
        goto fail;
    }
    Py_BEGIN_ALLOW_THREADS
    velocity_rows(PF_D(b[0]), PF_D(b[1]), n, &g, PF_D(b[10]), k, PF_D(b[11]), work);
    Py_END_ALLOW_THREADS
    free(work);
    pf_release(b, 12);
    Py_RETURN_NONE;
fail:
    free(work);
    pf_release(b, 12);
    return NULL;
}

/* ------------------------------------------------------------------------- nearest panel */
PF_CLONES
static void segment_distances(double px, double py, const double *restrict z1x,
                              const double *restrict z1y, const double *restrict tx,
                              const double *restrict ty, const double *restrict len, Py_ssize_t p,
                              double *restrict d, double *restrict t)
{
    for (Py_ssize_t j = 0; j < p; j++) {
        double dx = px - z1x[j], dy = py - z1y[j];
        double rx = dx * tx[j] + dy * ty[j], ry = dy * tx[j] - dx * ty[j];
        double f = rx / len[j];
        f = f < 0.0 ? 0.0 : f;
        f = f > 1.0 ? 1.0 : f;
        double ex = rx - f * len[j];
        d[j] = ex * ex + ry * ry;
        t[j] = f;
    }
}

static PyObject *py_nearest_panel(PyObject *self, PyObject *args)
{
    /* px, py, z1x, z1y, tx, ty, length, d_out, j_out (int64), t_out */
    PyObject *o[10];
    pf_buf b[10] = {0};
    double *work = NULL;
    static const char *names[10] = {"px", "py", "z1x", "z1y", "tx", "ty", "length", "d", "j", "t"};
    if (!PyArg_ParseTuple(args, "OOOOOOOOOO", &o[0], &o[1], &o[2], &o[3], &o[4], &o[5], &o[6],
                          &o[7], &o[8], &o[9]))
        return NULL;
    for (int k = 0; k < 10; k++)
        if (pf_get(o[k], &b[k], k >= 7, 8, names[k]))
            goto fail;
    Py_ssize_t n = PF_LEN(b[0]), p = PF_LEN(b[2]);
    if (p < 1 || PF_LEN(b[1]) != n || PF_LEN(b[3]) != p || PF_LEN(b[4]) != p ||
        PF_LEN(b[5]) != p || PF_LEN(b[6]) != p || PF_LEN(b[7]) != n || PF_LEN(b[8]) != n ||
        PF_LEN(b[9]) != n) {
        PyErr_SetString(PyExc_ValueError, "nearest_panel: inconsistent lengths");
        goto fail;
    }
    work = malloc(sizeof(double) * 2 * p);
    if (!work) {
        PyErr_NoMemory();
        goto fail;
    }
    Py_BEGIN_ALLOW_THREADS
    const double *px = PF_D(b[0]), *py = PF_D(b[1]);
    double *dist = work, *frac = work + p;
    for (Py_ssize_t i = 0; i < n; i++) {
        segment_distances(px[i], py[i], PF_D(b[2]), PF_D(b[3]), PF_D(b[4]), PF_D(b[5]),
                          PF_D(b[6]), p, dist, frac);
        Py_ssize_t best = 0; /* the first of equal distances, as numpy's argmin */
        for (Py_ssize_t j = 1; j < p; j++)
            if (dist[j] < dist[best])
                best = j;
        PF_D(b[7])[i] = sqrt(dist[best]);
        PF_I(b[8])[i] = best;
        PF_D(b[9])[i] = frac[best];
    }
    Py_END_ALLOW_THREADS
    free(work);
    pf_release(b, 10);
    Py_RETURN_NONE;
fail:
    free(work);
    pf_release(b, 10);
    return NULL;
}

static PyMethodDef methods[] = {
    {"log", py_log, METH_VARARGS, "log(x, out): natural logarithm, x clamped to 1e-300."},
    {"atan2", py_atan2, METH_VARARGS, "atan2(y, x, out): angle of (x, y)."},
    {"vortex_psi", py_vortex_psi, METH_VARARGS,
     "vortex_psi(px, py, z1x, z1y, tx, ty, length, a, b): per-pair stream function."},
    {"psi_nodes", py_psi_nodes, METH_VARARGS,
     "psi_nodes(px, py, chains..., col_start, col_end, out, stride): node-summed rows."},
    {"velocity_nodes", py_velocity_nodes, METH_VARARGS,
     "velocity_nodes(px, py, chains..., coef, out): induced velocity of k solutions."},
    {"nearest_panel", py_nearest_panel, METH_VARARGS,
     "nearest_panel(px, py, z1x, z1y, tx, ty, length, d, j, t): nearest point on the panels."},
    {NULL, NULL, 0, NULL}};

static struct PyModuleDef module = {PyModuleDef_HEAD_INIT, "_kernels",
                                    "Compiled influence kernels (see influence.py).", -1,
                                    methods};

PyMODINIT_FUNC PyInit__kernels(void) { return PyModule_Create(&module); }
