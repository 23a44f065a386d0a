/* Linear Newmark-beta for a shear frame with tridiagonal K and C: the same
 * algorithm and the same floating-point operations, in the same order, as
 * simulate.kernels.newmark._newmark_tridiagonal (ground acceleration only).
 * Built by bench_linear.py with gcc -O3 -ffp-contract=off as a comparison
 * column; it is not part of the package.
 *
 * Outputs are (nsteps, n) row-major: displacement, velocity, absolute
 * acceleration, drift ratio, storey shear.
 */
#include <stdlib.h>

int newmark_tridiagonal(int n, const double *m, const double *k, const double *h,
                        const double *kd, const double *ko, const double *cd, const double *co,
                        const double *ag, long nsteps, double dt, double gamma, double beta,
                        double *u_out, double *v_out, double *acc_out, double *drift_out,
                        double *shear_out)
{
    const double c1 = 1.0 / (beta * dt * dt);
    const double c2 = 1.0 / (beta * dt);
    const double c3 = 0.5 / beta - 1.0;
    const double q1 = gamma / (beta * dt);
    const double q2 = gamma / beta - 1.0;
    const double q3 = dt * (0.5 * gamma / beta - 1.0);
    const double g1 = gamma / (beta * dt);
    const double g2 = 1.0 - gamma / beta;
    const double g3 = dt * (1.0 - 0.5 * gamma / beta);

    double *buf = malloc(sizeof(double) * 8 * (size_t)(n + 1));
    if (!buf) return -1;
    double *inv_den = buf, *cp = buf + (n + 1), *off = buf + 2 * (n + 1);
    double *u = buf + 3 * (n + 1), *v = buf + 4 * (n + 1), *a = buf + 5 * (n + 1);
    double *w = buf + 6 * (n + 1), *y = buf + 7 * (n + 1);

    /* Thomas factors of Khat = K + c1 M + q1 C */
    for (int j = 0; j < n - 1; j++) off[j] = ko[j] + q1 * co[j];
    off[n - 1] = 0.0;
    double den = kd[0] + c1 * m[0] + q1 * cd[0];
    inv_den[0] = 1.0 / den;
    cp[0] = off[0] * inv_den[0];
    for (int j = 1; j < n; j++) {
        den = kd[j] + c1 * m[j] + q1 * cd[j] - off[j - 1] * cp[j - 1];
        inv_den[j] = 1.0 / den;
        cp[j] = off[j] * inv_den[j];
    }

    /* at rest; initial acceleration from M a0 = -M ag0; row 0 of the outputs */
    for (int j = 0; j < n; j++) {
        u[j] = 0.0;
        v[j] = 0.0;
        a[j] = (-m[j] * ag[0]) / m[j];
        w[j] = q1 * u[j] + q2 * v[j] + q3 * a[j];
        u_out[j] = 0.0;
        v_out[j] = 0.0;
        acc_out[j] = a[j] + ag[0];
        drift_out[j] = (0.0 - 0.0) / h[j];
        shear_out[j] = k[j] * (0.0 - 0.0);
    }

    for (long i = 1; i < nsteps; i++) {
        const double agi = ag[i];
        double *uo = u_out + i * n, *vo = v_out + i * n, *ao = acc_out + i * n;
        double *dro = drift_out + i * n, *so = shear_out + i * n;
        /* forward sweep of the Thomas algorithm on the right-hand side */
        double prev = 0.0;
        for (int j = 0; j < n; j++) {
            double r = m[j] * (c1 * u[j] + c2 * v[j] + c3 * a[j] - agi) + cd[j] * w[j];
            if (j > 0) r += co[j - 1] * w[j - 1];
            if (j < n - 1) r += co[j] * w[j + 1];
            if (j > 0) r -= off[j - 1] * prev;
            prev = r * inv_den[j];
            y[j] = prev;
        }
        /* back substitution, Newmark updates and the output row in one pass */
        double unext = y[n - 1], above = 0.0;
        for (int j = n - 1; j >= 0; j--) {
            if (j < n - 1) {
                unext = y[j] - cp[j] * unext;
                double d = above - unext;
                dro[j + 1] = d / h[j + 1];
                so[j + 1] = k[j + 1] * d;
            }
            double vj = v[j], aj = a[j];
            double du = unext - u[j];
            double anew = c1 * du - c2 * vj - c3 * aj;
            double vnew = g1 * du + g2 * vj + g3 * aj;
            u[j] = unext;
            v[j] = vnew;
            a[j] = anew;
            w[j] = q1 * unext + q2 * vnew + q3 * anew;
            uo[j] = unext;
            vo[j] = vnew;
            ao[j] = anew + agi;
            above = unext;
        }
        double d = above - 0.0;
        dro[0] = d / h[0];
        so[0] = k[0] * d;
    }
    free(buf);
    return 0;
}
