/*
 * Scalar native baseline for the benchmark: the spring-mass runner (point mass
 * on a massless linear leg spring, fixed attack angle, no damping) stride by
 * stride, written independently of the WASM kernel.
 *
 *   flight:  closed form (ballistic; touchdown where y - ground = L0 sin(attack),
 *            the next apex at y + vy^2 / (2 g));
 *   stance:  a plain adaptive Dormand-Prince 5(4) (Dormand & Prince 1980, the
 *            tableau of Hairer, Norsett, Wanner, Solving ODEs I, 2nd ed., table
 *            5.2), error per component scaled by atol + rtol max(|y0|, |y1|), RMS
 *            norm, the standard controller h *= min(5, max(0.2, 0.9 err^(-1/5)))
 *            (no growth after a rejection; ibid. II.4, eq. 4.12-4.13), libm pow;
 *   liftoff: r = L0, bracketed at the ends of each accepted step, located on
 *            the 4th-order interpolant (Shampine 1986) by the Illinois method to
 *            1e-9 of the step, the step re-taken to that time and polished by
 *            Newton steps with a second-order Taylor move, as accurately as the
 *            integrator;
 *   first trial step of a stance: the previous stance's first accepted step (the
 *            first stance: 2 rtol^(1/5) / (sqrt(k/m) + v/L0)), as the kernel does;
 *   failure: the body reaching the ground (py < 0), forward speed turning
 *            negative, an apex too low for the leg, no upward speed at liftoff.
 *
 * Random-walk terrain uses the same counter-based draws as the kernel
 * (SplitMix64 finalizer cascade over seed, stream, draw index; Box-Muller,
 * cosine branch), with libm's log/cos/sqrt (equal to the kernel's to about an
 * ulp), so a rollout meets the same ground.
 *
 * Built by test/bench/run.mjs with `gcc -O3`. Modes (numbers in, numbers out):
 *
 *   slip_dp5 one M L0 K G ATTACK_RAD
 *       stdin: lines "rtol atol apex_height speed ground"; stdout: one line per
 *       input, "next_apex_height next_speed steps rejected status" (%.17g);
 *   slip_dp5 run M L0 K G ATTACK_RAD RTOL ATOL HEIGHT SPEED ROLLOUTS STRIDES SIGMA SEED REPS
 *       REPS passes over ROLLOUTS rollouts of STRIDES strides from the apex state,
 *       rollout r on terrain stream r (flat if SIGMA is 0); stdout: one line
 *       "cpu_seconds_per_pass strides_per_pass completed steps rejected checksum"
 *       (process CPU time from clock_gettime(CLOCK_PROCESS_CPUTIME_ID), the
 *       median pass; checksum: the sum of the final apex heights).
 */
#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

enum { OK = 0, FAIL_NOT_PLACEABLE = 1, FAIL_GROUND = 2, FAIL_BACKWARD = 3, FAIL_NO_APEX = 4, FAIL_STEPS = 5 };

typedef struct {
  double m, L0, k, g, attack, rtol, atol;
  double sin_a, cos_a, k_over_m;
} Model;

typedef struct {
  double h0; /* next stance's first trial step */
  long steps, rejected;
} Stats;

/* ---- Dormand-Prince 5(4) tableau (exact rationals) ---- */
static const double A21 = 1.0 / 5;
static const double A31 = 3.0 / 40, A32 = 9.0 / 40;
static const double A41 = 44.0 / 45, A42 = -56.0 / 15, A43 = 32.0 / 9;
static const double A51 = 19372.0 / 6561, A52 = -25360.0 / 2187, A53 = 64448.0 / 6561, A54 = -212.0 / 729;
static const double A61 = 9017.0 / 3168, A62 = -355.0 / 33, A63 = 46732.0 / 5247, A64 = 49.0 / 176,
                    A65 = -5103.0 / 18656;
static const double B1 = 35.0 / 384, B3 = 500.0 / 1113, B4 = 125.0 / 192, B5 = -2187.0 / 6784, B6 = 11.0 / 84;
static const double E1 = 71.0 / 57600, E3 = -71.0 / 16695, E4 = 71.0 / 1920, E5 = -17253.0 / 339200,
                    E6 = 22.0 / 525, E7 = -1.0 / 40;
/* Shampine's dense output in power form (as in scipy's RK45), columns theta^1..theta^4. */
static const double P[7][4] = {
    {1.0, -8048581381.0 / 2820520608, 8663915743.0 / 2820520608, -12715105075.0 / 11282082432},
    {0, 0, 0, 0},
    {0, 131558114200.0 / 32700410799, -68118460800.0 / 10900136933, 87487479700.0 / 32700410799},
    {0, -1754552775.0 / 470086768, 14199869525.0 / 1410260304, -10690763975.0 / 1880347072},
    {0, 127303824393.0 / 49829197408, -318862633887.0 / 49829197408, 701980252875.0 / 199316789632},
    {0, -282668133.0 / 205662961, 2019193451.0 / 616988883, -1453857185.0 / 822651844},
    {0, 40617522.0 / 29380423, -110615467.0 / 29380423, 69997945.0 / 29380423},
};

#define N 4

/* m p'' = k (L0 - r) p / r - m g e_y, foot at the origin. */
static inline void rhs(const Model *md, const double *y, double *dy) {
  double r = sqrt(y[0] * y[0] + y[1] * y[1]);
  double a = md->k_over_m * (md->L0 - r) / r;
  dy[0] = y[2];
  dy[1] = y[3];
  dy[2] = a * y[0];
  dy[3] = a * y[1] - md->g;
}

typedef struct {
  double y0[N], k[7][N], yn[N], h;
} Step;

/* One step from (y0, k[0]); fills k[1..6] (k[6] = f(yn)), yn; returns the RMS scaled error. */
static double dp_step(const Model *md, Step *s, double h) {
  double ys[N];
  const double *y = s->y0;
  double(*k)[N] = s->k;
  s->h = h;
  for (int i = 0; i < N; i++) ys[i] = y[i] + h * A21 * k[0][i];
  rhs(md, ys, k[1]);
  for (int i = 0; i < N; i++) ys[i] = y[i] + h * (A31 * k[0][i] + A32 * k[1][i]);
  rhs(md, ys, k[2]);
  for (int i = 0; i < N; i++) ys[i] = y[i] + h * (A41 * k[0][i] + A42 * k[1][i] + A43 * k[2][i]);
  rhs(md, ys, k[3]);
  for (int i = 0; i < N; i++) ys[i] = y[i] + h * (A51 * k[0][i] + A52 * k[1][i] + A53 * k[2][i] + A54 * k[3][i]);
  rhs(md, ys, k[4]);
  for (int i = 0; i < N; i++)
    ys[i] = y[i] + h * (A61 * k[0][i] + A62 * k[1][i] + A63 * k[2][i] + A64 * k[3][i] + A65 * k[4][i]);
  rhs(md, ys, k[5]);
  for (int i = 0; i < N; i++)
    s->yn[i] = y[i] + h * (B1 * k[0][i] + B3 * k[2][i] + B4 * k[3][i] + B5 * k[4][i] + B6 * k[5][i]);
  rhs(md, s->yn, k[6]);
  double sum = 0;
  for (int i = 0; i < N; i++) {
    double e = h * (E1 * k[0][i] + E3 * k[2][i] + E4 * k[3][i] + E5 * k[4][i] + E6 * k[5][i] + E7 * k[6][i]);
    double sc = md->atol + md->rtol * fmax(fabs(y[i]), fabs(s->yn[i]));
    sum += (e / sc) * (e / sc);
  }
  return sqrt(sum / N);
}

static void dp_dense(const Step *s, double th, double *out) {
  double t2 = th * th, t3 = t2 * th, t4 = t3 * th;
  double q[7];
  for (int j = 0; j < 7; j++) q[j] = P[j][0] * th + P[j][1] * t2 + P[j][2] * t3 + P[j][3] * t4;
  for (int i = 0; i < N; i++) {
    double acc = 0;
    for (int j = 0; j < 7; j++) acc += q[j] * s->k[j][i];
    out[i] = s->y0[i] + s->h * acc;
  }
}

static inline double leg_excess(const Model *md, const double *y) { return sqrt(y[0] * y[0] + y[1] * y[1]) - md->L0; }

/* Stance from touchdown state y to liftoff; returns a status, the liftoff state in y. */
static int stance(const Model *md, double *y, Stats *st) {
  Step s;
  memcpy(s.y0, y, sizeof s.y0);
  rhs(md, s.y0, s.k[0]);
  double omega = sqrt(md->k_over_m);
  double h = st->h0;
  int after_reject = 0, first = 1;
  double g0 = leg_excess(md, s.y0);
  for (long n = 0; n < 100000; n++) {
    double err = dp_step(md, &s, h);
    if (!(err <= 1.0)) {
      st->rejected++;
      double f = isfinite(err) ? fmax(0.2, 0.9 * pow(err, -0.2)) : 0.1;
      h *= fmin(1.0, f);
      after_reject = 1;
      continue;
    }
    st->steps++;
    if (first) {
      st->h0 = h;
      first = 0;
    }
    double g1 = leg_excess(md, s.yn);
    if (s.yn[1] < 0) return FAIL_GROUND;
    if (s.yn[2] < 0) return FAIL_BACKWARD;
    if (g0 < 0 && g1 >= 0) {
      /* Illinois on the interpolant, then the true step to that time, then Newton. */
      double a = 0, b = 1, ga = g0, gb = g1, yi[N];
      int side = 0;
      if (gb != 0) {
        for (int it = 0; it < 80 && b - a >= 1e-9; it++) {
          double th = (a * gb - b * ga) / (gb - ga);
          if (!(th > a && th < b)) th = 0.5 * (a + b);
          dp_dense(&s, th, yi);
          double gv = leg_excess(md, yi);
          if (gv >= 0) {
            b = th;
            gb = gv;
            if (side == 1) ga *= 0.5;
            side = 1;
          } else {
            a = th;
            ga = gv;
            if (side == -1) gb *= 0.5;
            side = -1;
          }
        }
      }
      dp_step(md, &s, b * h);
      st->steps++;
      double *p = s.yn, *f = s.k[6];
      for (int it = 0; it < 3; it++) {
        double r = sqrt(p[0] * p[0] + p[1] * p[1]);
        double rdot = (p[0] * p[2] + p[1] * p[3]) / r;
        if (rdot == 0) break;
        double dt = -(r - md->L0) / rdot;
        if (!(fabs(dt) > 1e-17 / omega) || fabs(dt) > 1e-4 / omega) break;
        double force = md->k * (md->L0 - r), fdot = -md->k * rdot;
        double jx = (fdot * p[0] / r + force * (p[2] / r - p[0] * rdot / (r * r))) / md->m;
        double jy = (fdot * p[1] / r + force * (p[3] / r - p[1] * rdot / (r * r))) / md->m;
        double half = 0.5 * dt * dt;
        double q[N] = {p[0] + p[2] * dt + f[2] * half, p[1] + p[3] * dt + f[3] * half, p[2] + f[2] * dt + jx * half,
                       p[3] + f[3] * dt + jy * half};
        memcpy(p, q, sizeof q);
        rhs(md, p, f);
      }
      memcpy(y, s.yn, sizeof s.y0);
      return OK;
    }
    memcpy(s.y0, s.yn, sizeof s.y0);
    memcpy(s.k[0], s.k[6], sizeof s.k[0]);
    g0 = g1;
    double fac = 0.9 * pow(err > 1e-12 ? err : 1e-12, -0.2);
    fac = fmin(after_reject ? 1.0 : 5.0, fmax(0.2, fac));
    h *= fac;
    after_reject = 0;
  }
  return FAIL_STEPS;
}

/* One stride from apex (height ya, speed vx) onto ground; next apex into *ya, *vx. */
static int stride(const Model *md, double *ya, double *vx, double ground, Stats *st) {
  double drop = *ya - ground - md->L0 * md->sin_a;
  if (!(drop >= 0)) return FAIL_NOT_PLACEABLE;
  double t = sqrt(2 * drop / md->g);
  double y[N] = {-md->L0 * md->cos_a, md->L0 * md->sin_a, *vx, -md->g * t};
  int status = stance(md, y, st);
  if (status != OK) return status;
  if (!(y[3] > 0)) return FAIL_NO_APEX;
  *ya = ground + y[1] + y[3] * y[3] / (2 * md->g);
  *vx = y[2];
  return OK;
}

static double initial_step(const Model *md, double speed) {
  double f = fmin(0.5, 2 * pow(md->rtol, 0.2));
  return f / (sqrt(md->k_over_m) + speed / md->L0);
}

/* ---- counter-based terrain (same keys and constants as the kernel's) ---- */
static inline uint64_t mix64(uint64_t z) {
  z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9ULL;
  z = (z ^ (z >> 27)) * 0x94d049bb133111ebULL;
  return z ^ (z >> 31);
}
static inline double uniform01(uint64_t seed, uint64_t stream, uint64_t counter) {
  uint64_t z = mix64(seed + 0x9e3779b97f4a7c15ULL);
  z = mix64(z ^ (stream * 0xd1b54a32d192ed03ULL + 0x632be59bd9b4e019ULL));
  z = mix64(z ^ (counter * 0x9e3779b97f4a7c15ULL + 0xc2b2ae3d27d4eb4fULL));
  return ((double)(z >> 11) + 0.5) * 1.1102230246251565e-16;
}
static inline double gaussian(uint64_t seed, uint64_t stream, uint64_t index) {
  double u1 = uniform01(seed, stream, index << 1), u2 = uniform01(seed, stream, (index << 1) | 1);
  return sqrt(-2 * log(u1)) * cos(6.283185307179586 * u2);
}

static Model model_from(char **a) {
  Model md;
  md.m = atof(a[0]);
  md.L0 = atof(a[1]);
  md.k = atof(a[2]);
  md.g = atof(a[3]);
  md.attack = atof(a[4]);
  md.sin_a = sin(md.attack);
  md.cos_a = cos(md.attack);
  md.k_over_m = md.k / md.m;
  md.rtol = md.atol = 1e-10;
  return md;
}

static double cpu_now(void) {
  struct timespec ts;
  clock_gettime(CLOCK_PROCESS_CPUTIME_ID, &ts);
  return ts.tv_sec + 1e-9 * ts.tv_nsec;
}

static int cmp_double(const void *a, const void *b) {
  double x = *(const double *)a, y = *(const double *)b;
  return x < y ? -1 : x > y;
}

int main(int argc, char **argv) {
  if (argc >= 7 && strcmp(argv[1], "one") == 0) {
    Model md = model_from(argv + 2);
    double rtol, atol, ya, vx, ground;
    while (scanf("%lf %lf %lf %lf %lf", &rtol, &atol, &ya, &vx, &ground) == 5) {
      md.rtol = rtol;
      md.atol = atol;
      Stats st = {initial_step(&md, vx), 0, 0};
      int status = stride(&md, &ya, &vx, ground, &st);
      printf("%.17g %.17g %ld %ld %d\n", status == OK ? ya : NAN, status == OK ? vx : NAN, st.steps, st.rejected, status);
    }
    return 0;
  }
  if (argc == 16 && strcmp(argv[1], "run") == 0) {
    Model md = model_from(argv + 2);
    md.rtol = atof(argv[7]);
    md.atol = atof(argv[8]);
    double h0 = atof(argv[9]), v0 = atof(argv[10]);
    long rollouts = atol(argv[11]), strides = atol(argv[12]);
    double sigma = atof(argv[13]);
    uint64_t seed = (uint64_t)strtoull(argv[14], NULL, 10);
    int reps = atoi(argv[15]);
    double *times = malloc(sizeof(double) * (reps > 0 ? reps : 1));
    long done = 0, completed = 0, steps = 0, rejected = 0;
    double checksum = 0;
    for (int rep = 0; rep < reps; rep++) {
      double c0 = cpu_now();
      done = completed = steps = rejected = 0;
      checksum = 0;
      for (long r = 0; r < rollouts; r++) {
        double ya = h0, vx = v0, walk = 0;
        Stats st = {initial_step(&md, vx), 0, 0};
        int status = OK;
        for (long s = 0; s < strides && status == OK; s++) {
          if (sigma > 0) walk += sigma * gaussian(seed, (uint64_t)r, (uint64_t)s);
          status = stride(&md, &ya, &vx, walk, &st);
          if (status == OK) done++;
        }
        if (status == OK) completed++;
        steps += st.steps;
        rejected += st.rejected;
        checksum += ya;
      }
      times[rep] = cpu_now() - c0;
    }
    qsort(times, reps, sizeof(double), cmp_double);
    printf("%.9g %ld %ld %ld %ld %.17g\n", times[reps / 2], done, completed, steps, rejected, checksum);
    free(times);
    return 0;
  }
  fprintf(stderr, "usage: slip_dp5 one M L0 K G ATTACK_RAD < lines 'rtol atol height speed ground'\n"
                  "       slip_dp5 run M L0 K G ATTACK_RAD RTOL ATOL HEIGHT SPEED ROLLOUTS STRIDES SIGMA SEED REPS\n");
  return 2;
}
