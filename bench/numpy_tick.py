#!/usr/bin/env python3
"""The control tick written plainly with NumPy, checked against weft's own output, then timed.

The tick is the one dev.weft.bench.TickWorkload runs, as weft's control loop runs it (steps 4 and 6
of its runTick, and the frame of step 8):

  1. the plan's state from temporal ensembling (dev.weft.filters.TemporalEnsembleBlender, oldest
     first, weights exp(-m*i) times a taper): each chunk resampled onto control ticks by a natural
     cubic spline with its first and second derivatives (ChunkCurve), each chunk's weight tapered
     in and out along the quintic smooth step 6x^5 - 15x^4 + 10x^3, and the weighted mean read
     with the quotient rule for its derivatives, from per-tick running sums kept in units of the
     largest weight merged into the slot;
  2. the plan's velocity and acceleration from per tick to per second (times the tick rate and
     its square);
  3. the jerk-limited limiter following the plan (dev.weft.safety.AxisFilter.follow): the plan's
     derivatives clamped to the bounds, the acceleration fed forward at a rate within the jerk
     bound, the shares fed forward falling on a plan beyond the velocity, acceleration or jerk
     bound (the velocity's share on its velocity and acceleration load only),
     the estimate of how fast the plan moves beyond its own derivatives, the "followable" memory
     of the plan's jerk; then the hold of a plan at rest, the linear zone (state feedback with
     poles 4, 12, 40 rad/s placed by Ackermann's formula, inside a shield that bisects the jerk
     when it would break a bound), or far from the plan the minimum-time law: the time-optimal
     stop of a third-order integrator chain (the double-S stop of Biagiotti and Melchiorri,
     Trajectory Planning for Automatic Machines and Robots, Springer 2008, section 3.4) and the
     largest blend between it and a full jerk toward the target, found by 24 bisection steps,
     that keeps every bound;
  4. the command frame: positions and the finite-difference velocities, with the finite check.

With "preview": true in the export (TickExport ... PREVIEW, TickWorkload.previewTick: the armed
loop's tick), the plan's preview too: the blender's running sums of its positions, formed after
each accepted chunk (np.cumsum adds in tick order, as Java does), give the mean over each run
ahead (AbstractChunkBlender.previewMeans); the limiter latches the receding-horizon law for the
horizon's length wherever the plan, now or in the preview (divided differences of the run means),
is beyond 0.9 of a bound, and takes the first jerk of its least-squares plan
(dev.weft.safety.PreviewLaw: move-blocked runs, the jerk in a box solved by a primal active set
method warm-started from the last solve, penalties on the accelerations and velocities at the
runs' ends) through the linear zone's shield. That part is scalar Python per joint, in Java's
order of operations; the run lengths are computed here and checked equal to the export's.

It is written the NumPy way where the branching allows it: every joint at once, branches as
masks, each bisection over all joints that need it together. The per-joint arithmetic is in the
same order as weft's Java, and NumPy's element-wise float64 operations round as Java's do, so the
outputs are expected to equal weft's bit for bit: TOLERANCE is 0. (No sum over joints enters the
arithmetic, so no reordered reduction can differ; the only transcendental functions, exp in the
set-up, give the same doubles as Java's Math.exp for the arguments used, which the check
confirms.)

What the check reaches: bench/compare checks the OSCILLATING and HOLDING exports it times (the
minimum-time law with its 24-step bisection, the linear zone and its shield's bisection, the
plan's derivatives clamped and fed forward at a falling share; the hold) and a CATCHING_UP
export (a plan inside the bounds: the minimum-time law in the frame of the plan's rate, the
linear zone with the plan fed forward in full and the drift estimate), and the PREVIEW exports of
OSCILLATING and CATCHING_UP (the receding-horizon law with and without its shield's bisection,
penalties and active bounds among its solves, beside the minimum-time law). Ported but reached by none
of them, so unchecked: the non-finite-plan stop, NOT_VIABLE, the position clamp, and the
"followable" memory falling to 0 (its threshold is never crossed: changing FOLLOW_DEFICIT changes
no output of these exports).

Usage: numpy_tick.py EXPORT.json [--timed-ticks N | --check-only]
  EXPORT.json   written by dev.weft.bench.TickExport (the accepted chunks, the limits and weft's
                plan state, command, commanded velocity and acceleration, and flags for every tick)
  --timed-ticks ticks timed after the check (default 2000)
  --check-only  the check alone, no timing
Prints the largest differences from weft's output and which law the limiter took how often, and
  numpy-check joints=D steps=K motion=M ticks=N largest_difference=... flag_mismatches=...
exits with 1 when the outputs differ by more than TOLERANCE or any flag differs, and otherwise,
unless --check-only, times the tick and prints
  numpy-tick joints=D steps=K motion=M ticks=N median_ns=... mean_ns=... p99_ns=...
"""

import json
import math
import sys
import time

import numpy as np

TOLERANCE = 0.0
"""Largest difference from weft's output accepted as equal (rad, rad/s, rad/s^2): none."""

# JerkLimiter flags
POSITION, VELOCITY, ACCELERATION, JERK = 1, 2, 4, 8
NON_FINITE_TARGET, NOT_VIABLE, POSITION_CLAMPED = 16, 32, 64
# AxisFilter feasibility codes
OK, FAIL_ACCELERATION, FAIL_VELOCITY, FAIL_POSITION, FAIL_TARGET = 0, 1, 2, 3, 4
# AxisFilter constants
BISECTION_STEPS = 24
TRACK_BISECTION_STEPS = 16
POLES = (4.0, 12.0, 40.0)
RATE_TIME_CONSTANT = 0.1
FEASIBILITY_RECOVERY = 0.1
LOAD_TIME_CONSTANT = 0.2
SHARE_HOLD = 0.03
HOLD_BAND = 1.1
LOAD_WEIGHT = 1.6
DRIFT_TIME_CONSTANT = 0.05
ENTRY_SHARE = 1.0
EXIT_SHARE = 6.0
FEED_FORWARD_FULL = 0.9
FOLLOW_DEFICIT = 0.05
# AxisFilter and PreviewLaw constants of the receding-horizon law
PREVIEW_BLOCKS = 10
PREVIEW_HORIZON = 0.4
PREVIEW_JERK_PRICE = 0.00384
PREVIEW_GROWTH = 1.5
PENALTY = 100.0
OUTER = 3
MAX_ITERATIONS = 48
# AbstractChunkBlender constants
TICK_EPSILON = 1e-9
NO_TICK = -(2 ** 63)

# the laws the limiter can take for a joint in a tick (counted, not used by the algorithm)
LAWS = ("hold", "linear zone", "linear zone, shield bisection", "minimum time, full jerk",
        "minimum time, bisection", "minimum time, at rest", "stop (non-finite plan)", "not viable",
        "receding horizon", "receding horizon, shield bisection")


# ---------------------------------------------------------------------------------------- plan

def smooth_step(x):
    """S(x) = 6x^5 - 15x^4 + 10x^3, S' and S'', clamped outside (0, 1) (QuinticSmoothStep)."""
    inside = (x > 0.0) & (x < 1.0)
    s = np.where(x <= 0.0, 0.0, np.where(x >= 1.0, 1.0, x * x * x * (10.0 + x * (-15.0 + 6.0 * x))))
    t = x * (1.0 - x)
    first = np.where(inside, 30.0 * t * t, 0.0)
    second = np.where(inside, 60.0 * x * (1.0 - x) * (1.0 - 2.0 * x), 0.0)
    return s, first, second


class SplineCurve:
    """One chunk's natural cubic spline on knots u = 0 .. points-1, with d/du and d2/du2 (ChunkCurve)."""

    def __init__(self, max_steps):
        self.sweep = np.zeros(max_steps)
        for i in range(1, max_steps):
            self.sweep[i] = 1.0 / (4.0 - self.sweep[i - 1])

    def prepare(self, chunk):
        """Second derivatives M (points, D): M[j-1] + 4 M[j] + M[j+1] = 6 (y[j+1] - 2 y[j] + y[j-1]), M = 0 at the ends."""
        points = chunk.shape[0]
        m = np.zeros_like(chunk)
        if points < 2:
            return m
        last = points - 1
        for j in range(1, last):  # forward elimination, all joints at once
            y = chunk[j]
            rhs = 6.0 * ((chunk[j + 1] - y) - (y - chunk[j - 1]))
            m[j] = (rhs - m[j - 1]) * self.sweep[j]
        for j in range(last - 2, 0, -1):  # back substitution
            m[j] -= self.sweep[j] * m[j + 1]
        return m

    @staticmethod
    def evaluate(chunk, m, u):
        """Position, slope, curvature at fractional steps u (T,) for all joints: (T, D) each."""
        points = chunk.shape[0]
        if points == 1:
            shape = (u.shape[0], chunk.shape[1])
            return np.broadcast_to(chunk[0], shape).copy(), np.zeros(shape), np.zeros(shape)
        j = np.where(u <= 0.0, 0, u.astype(np.int64))
        j = np.minimum(j, points - 2)
        s = np.clip(u - j, 0.0, 1.0)
        pa, pb = chunk[j], chunk[j + 1]
        ma, mb = m[j], m[j + 1]
        change = pb - pa
        one_minus = (1.0 - s)[:, None]
        sc = s[:, None]
        bend = sc * one_minus / 6.0
        ka = (3.0 * one_minus * one_minus - 1.0) / 6.0
        kb = (3.0 * sc * sc - 1.0) / 6.0
        inner = pa + sc * change - bend * ((2.0 - sc) * ma + (1.0 + sc) * mb)
        position = np.where(sc == 0.0, pa, np.where(sc == 1.0, pb, inner))
        slope = change - ka * ma + kb * mb
        curvature = one_minus * ma + sc * mb
        return position, slope, curvature


class EnsemblePlan:
    """Tapered temporal ensembling, oldest prediction first, step ratio r: a ring of per-tick sums."""

    def __init__(self, joints, max_steps, step_ratio, m, taper_steps):
        span = math.floor((max_steps - 1) * step_ratio + TICK_EPSILON)
        capacity = 1
        while capacity < span + 1:
            capacity *= 2
        self.mask = capacity - 1
        self.r = step_ratio
        self.decay = math.exp(-m)
        self.taper_ticks = 0 if taper_steps == 0.0 else max(0, math.ceil(taper_steps * step_ratio - TICK_EPSILON))
        self.curve = SplineCurve(max_steps)
        self.sum_p = np.zeros((capacity, joints))   # per slot and joint: sum w*p, sum (w*p)', sum (w*p)''
        self.sum_v = np.zeros((capacity, joints))
        self.sum_a = np.zeros((capacity, joints))
        self.w = np.zeros(capacity)                 # per slot: W = sum w, W', W''
        self.w_rate = np.zeros(capacity)
        self.w_bend = np.zeros(capacity)
        self.next_weight = np.zeros(capacity)
        self.unit = np.zeros(capacity)              # the raw weight that counts as 1 in the slot's sums
        self.slot_tick = np.full(capacity, NO_TICK, dtype=np.int64)
        self.last_now = NO_TICK
        self.plan_end = NO_TICK
        self.running = np.zeros((capacity, joints))  # per slot: the sum of the plan's positions from sum_base
        self.sum_base = NO_TICK

    def accept(self, chunk, origin, now):
        """chunk: (K, D), valid; merges its ticks now .. origin + (K-1) r (the stale prefix dropped)."""
        points = chunk.shape[0]
        span = math.floor((points - 1) * self.r + TICK_EPSILON)
        self.last_now = now
        if now - origin > span:
            return 0
        m = self.curve.prepare(chunk)
        end = origin + span
        ticks = np.arange(now, end + 1, dtype=np.int64)
        u = (ticks - origin) / self.r
        p, v, a = self.curve.evaluate(chunk, m, u)
        v = v / self.r
        a = a / (self.r * self.r)
        # the taper of this chunk (ramp l = min(L, floor((T + 1)/2)) ticks in and out)
        ramp_ticks = min(self.taper_ticks, (end - now + 2) // 2)
        taper = np.ones(ticks.shape[0])
        taper_rate = np.zeros(ticks.shape[0])
        taper_bend = np.zeros(ticks.shape[0])
        if ramp_ticks > 0:
            ramp = float(ramp_ticks)
            into = ticks - (now - 1)
            out = (end + 1) - ticks
            ramping_in = into < ramp_ticks
            ramping_out = ~ramping_in & (out < ramp_ticks)
            x = np.where(ramping_in, into, out) / ramp
            s, s1, s2 = smooth_step(x)
            ramping = ramping_in | ramping_out
            taper = np.where(ramping, s, 1.0)
            taper_rate = np.where(ramping_in, s1 / ramp, np.where(ramping_out, -s1 / ramp, 0.0))
            taper_bend = np.where(ramping, s2 / (ramp * ramp), 0.0)
        slots = ticks & self.mask
        had = (self.plan_end != NO_TICK) & (ticks <= self.plan_end) & (self.slot_tick[slots] == ticks)
        # first prediction for a tick: it defines the slot's unit of weight, so it counts with weight 1
        f = ~had
        fs = slots[f]
        rel_rate = taper_rate[f] / taper[f]
        rel_bend = taper_bend[f] / taper[f]
        self.unit[fs] = taper[f]
        self.next_weight[fs] = self.decay
        self.w[fs] = 1.0
        self.w_rate[fs] = rel_rate
        self.w_bend[fs] = rel_bend
        pf, vf = p[f], v[f]
        self.sum_p[fs] = pf
        self.sum_v[fs] = rel_rate[:, None] * pf + vf
        self.sum_a[fs] = rel_bend[:, None] * pf + 2.0 * rel_rate[:, None] * vf + a[f]
        # later predictions: the oldest-first weight, re-expressing the sums when it is the largest yet
        hs = slots[had]
        if hs.size:
            factor = self.next_weight[hs]
            self.next_weight[hs] = factor * self.decay
            raw = factor * taper[had]
            current = self.unit[hs]
            larger = raw > current
            k = np.where(larger, current / raw, 1.0)
            scale = hs[larger]
            kk = k[larger]
            self.w[scale] *= kk
            self.w_rate[scale] *= kk
            self.w_bend[scale] *= kk
            self.sum_p[scale] *= kk[:, None]
            self.sum_v[scale] *= kk[:, None]
            self.sum_a[scale] *= kk[:, None]
            self.unit[scale] = raw[larger]
            current = np.where(larger, raw, current)
            w = raw / current
            w_rate = factor * taper_rate[had] / current
            w_bend = factor * taper_bend[had] / current
            self.w[hs] += w
            self.w_rate[hs] += w_rate
            self.w_bend[hs] += w_bend
            ph, vh = p[had], v[had]
            self.sum_p[hs] += w[:, None] * ph
            self.sum_v[hs] += w_rate[:, None] * ph + w[:, None] * vh
            self.sum_a[hs] += w_bend[:, None] * ph + 2.0 * w_rate[:, None] * vh + w[:, None] * a[had]
        self.slot_tick[slots] = ticks
        self.plan_end = max(self.plan_end, end)
        self.form_running_sums(now)
        return int(end - now + 1)

    def form_running_sums(self, start):
        """AbstractChunkBlender.formRunningSums: running sums of the positions from start to the plan's end."""
        self.sum_base = start
        ticks = np.arange(start, self.plan_end + 1, dtype=np.int64)
        slots = ticks & self.mask
        positions = self.sum_p[slots] / self.w[slots][:, None]
        self.running[slots] = np.cumsum(positions, axis=0)  # add.accumulate: in tick order, as Java adds

    def sum_through(self, t, end_position):
        if t < self.sum_base:
            return np.zeros(end_position.shape[0])
        if t <= self.plan_end:
            return self.running[t & self.mask]
        return self.running[self.plan_end & self.mask] + float(t - self.plan_end) * end_position

    def preview_means(self, tick, run_ends):
        """AbstractChunkBlender.previewMeans: (D, runs) run means ahead of tick, the last position held."""
        if not self.covers(tick):
            return None
        end_slot = self.plan_end & self.mask
        end_position = self.sum_p[end_slot] / self.w[end_slot]
        out = np.empty((end_position.shape[0], len(run_ends)))
        before = self.sum_through(tick - 1, end_position)
        start = 0
        for b, e in enumerate(run_ends):
            after = self.sum_through(tick + e - 1, end_position)
            out[:, b] = (after - before) / float(e - start)
            before = after
            start = e
        return out

    def covers(self, tick):
        return (self.plan_end != NO_TICK and self.last_now <= tick <= self.plan_end
                and self.slot_tick[tick & self.mask] == tick)

    def state_at(self, tick, position, velocity, acceleration):
        """The plan's position, velocity per tick and acceleration per tick^2 (quotient rule)."""
        if not self.covers(tick):
            return False
        slot = tick & self.mask
        total, total_rate, total_bend = self.w[slot], self.w_rate[slot], self.w_bend[slot]
        np.divide(self.sum_p[slot], total, out=position)
        np.divide(self.sum_v[slot] - position * total_rate, total, out=velocity)
        np.divide(self.sum_a[slot] - 2.0 * velocity * total_rate - position * total_bend, total, out=acceleration)
        return True

    def ticks_remaining(self, tick):
        return self.plan_end - tick + 1 if self.covers(tick) else 0


# ------------------------------------------------------------------------------------- limiter

def linear_zone_gains(h):
    """AxisFilter.linearZoneGains: Ackermann's formula, written out in the same order (scalars)."""
    def mul_vec(m, x):
        return [m[r][0] * x[0] + m[r][1] * x[1] + m[r][2] * x[2] for r in range(3)]

    def mul(x, y):
        return [[x[r][0] * y[0][c] + x[r][1] * y[1][c] + x[r][2] * y[2][c] for c in range(3)] for r in range(3)]

    am = [[1.0, h, h * h / 2], [0.0, 1.0, h], [0.0, 0.0, 1.0]]
    b = [h * h * h / 6, h * h / 2, h]
    c1 = mul_vec(am, b)
    c2 = mul_vec(am, c1)
    c3 = mul_vec(am, c2)
    ctrb = [[c1[0], c2[0], c3[0]], [c1[1], c2[1], c3[1]], [c1[2], c2[2], c3[2]]]
    z1, z2, z3 = (math.exp(-w * h) for w in POLES)
    p1 = -(z1 + z2 + z3)
    p2 = z1 * z2 + z1 * z3 + z2 * z3
    p3 = -z1 * z2 * z3
    a2 = mul(am, am)
    a3 = mul(a2, am)
    phi = [[a3[r][c] + p1 * a2[r][c] + p2 * am[r][c] + (p3 if r == c else 0.0) for c in range(3)] for r in range(3)]
    (a, bb, c), (d, e, f), (g, hh, i) = ctrb
    det = a * (e * i - f * hh) - bb * (d * i - f * g) + c * (d * hh - e * g)
    last_row = [(d * hh - e * g) / det, (bb * g - a * hh) / det, (a * e - bb * d) / det]
    k = []
    for col in range(3):
        s = 0.0
        for m in range(3):
            s += last_row[m] * phi[m][col]
        k.append(s)
    return k


class Extremes:
    """A state advanced along constant-jerk segments, and the extremes met on the way (all joints)."""
    __slots__ = ("q", "v", "a", "q_min", "q_max", "v_min", "v_max", "a_min", "a_max")

    def __init__(self, q, v, a):
        self.q, self.v, self.a = q, v, a
        self.q_min, self.q_max = q, q
        self.v_min, self.v_max = v, v
        self.a_min, self.a_max = a, a


def java_round(x):
    """Java's Math.round for a double: the nearest integer, halves up."""
    return int(math.floor(x + 0.5))


def preview_runs(dt):
    """AxisFilter.previewRuns: the runs' lengths in ticks."""
    total = max(float(PREVIEW_BLOCKS), PREVIEW_HORIZON / dt)
    r = PREVIEW_GROWTH
    first = total * (r - 1.0) / (r ** PREVIEW_BLOCKS - 1.0)
    return [max(1, java_round(first * r ** b)) for b in range(PREVIEW_BLOCKS)]


def factor_row(m, idx, chol, r):
    """PreviewLaw.factorRow: row r of the Cholesky factor of m restricted to idx."""
    jr = idx[r]
    row = chol[r]
    for c in range(r + 1):
        total = m[jr][idx[c]]
        other = chol[c]
        for k in range(c):
            total -= row[k] * other[k]
        row[c] = math.sqrt(total) if c == r else total / other[c]


class PreviewLaw:
    """The receding-horizon law of one joint (dev.weft.safety.PreviewLaw), in plain Python floats.

    Scalar code, one joint at a time: the active-set method branches per joint and per iteration,
    so there is nothing to vectorise, and Python's floats are IEEE doubles rounded as Java's are.
    """

    def __init__(self, dt, run_ticks, jerk_price):
        n = len(run_ticks)
        self.runs = n
        self.run_ends = []
        total = 0
        for t in run_ticks:
            total += t
            self.run_ends.append(total)
        self.horizon_ticks = total
        self.centres = [0.5 * ((0 if j == 0 else self.run_ends[j - 1]) + self.run_ends[j] - 1) * dt for j in range(n)]
        self.unit = total * dt / n
        h = dt / self.unit
        run_of = []
        j = 0
        for step in range(total):
            if step >= self.run_ends[j]:
                j += 1
            run_of.append(j)
        g = [[0.0] * n for _ in range(n)]
        f = [[0.0] * 3 for _ in range(n)]
        rate = [[0.0] * n for _ in range(2 * n)]
        self.end_time = [self.run_ends[k] * h for k in range(n)]
        self.weight = [float(run_ticks[k]) for k in range(n)]
        for j in range(n):
            p = vel = acc = 0.0
            for step in range(total):
                jerk = 1.0 if run_of[step] == j else 0.0
                p += h * (vel + h * (0.5 * acc + h * jerk / 6.0))
                vel += h * (acc + 0.5 * h * jerk)
                acc += h * jerk
                k = run_of[step]
                g[k][j] += p / run_ticks[k]
                if step + 1 == self.run_ends[k]:
                    rate[k][j] = acc
                    rate[n + k][j] = vel
        for step in range(total):
            t = (step + 1) * h
            k = run_of[step]
            f[k][0] += 1.0 / run_ticks[k]
            f[k][1] += t / run_ticks[k]
            f[k][2] += 0.5 * t * t / run_ticks[k]
        cube = jerk_price / (self.unit * self.unit * self.unit)
        lam = cube * cube
        hess = [[0.0] * n for _ in range(n)]
        for r in range(n):
            for c in range(n):
                total_rc = lam * self.weight[r] if r == c else 0.0
                for k in range(n):
                    total_rc += self.weight[k] * g[k][r] * g[k][c]
                hess[r][c] = total_rc
        self.g, self.f, self.rate, self.hess = g, f, rate, hess
        self.whole_factor = [[0.0] * n for _ in range(n)]
        for r in range(n):
            factor_row(hess, list(range(n)), self.whole_factor, r)
        self.factor = [[0.0] * n for _ in range(n)]
        self.hmod = [row[:] for row in hess]
        self.b = [0.0] * n
        self.u = [0.0] * n
        self.mu = [0.0] * n
        self.x = [0.0] * n
        self.state = [0] * n
        self.rhs = [0.0] * n
        self.free = [0] * n
        self.penalised = [False] * (2 * n)
        self.current = self.hess  # the Hessian of the current solve: hess, or hmod once it carries penalties
        self.first_at_bound = False

    def free_rate(self, k, vs, acs):
        return acs if k < self.runs else vs + self.end_time[k - self.runs] * acs

    @staticmethod
    def dot(row, y, last):
        total = 0.0
        for j in range(last + 1):
            total += row[j] * y[j]
        return total

    def bounded_jerk(self, q, v, a, preview, j_max, a_max, v_max):
        n = self.runs
        u1 = self.unit
        vs = v * u1
        acs = a * u1 * u1
        a_lim = a_max * u1 * u1
        v_lim = v_max * u1
        j_lim = j_max * u1 * u1 * u1
        penalised = self.penalised
        for k in range(2 * n):
            penalised[k] = False
        g, f, b, hmod, u = self.g, self.f, self.b, self.hmod, self.u
        for rnd in range(OUTER + 1):
            self.current = self.hess if rnd == 0 else hmod
            for r in range(n):
                if rnd > 0:
                    hmod[r][:] = self.hess[r]
                b[r] = 0.0
            for k in range(n):
                res = preview[k] - (f[k][0] * q + f[k][1] * vs + f[k][2] * acs)
                wr = self.weight[k] * res
                gk = g[k]
                for j in range(k + 1):  # G is lower triangular
                    b[j] += gk[j] * wr
            for k in range(2 * n):
                if not penalised[k]:
                    continue
                offset = self.free_rate(k, vs, acs)
                lim = a_lim if k < n else v_lim
                last = k if k < n else k - n
                goal = lim if (offset + self.dot(self.rate[k], u, last)) > 0.0 else -lim
                ck = self.rate[k]
                for r in range(last + 1):
                    cr = ck[r]
                    if cr == 0.0:
                        continue
                    b[r] += PENALTY * cr * (goal - offset)
                    row = hmod[r]
                    for c in range(last + 1):
                        row[c] += PENALTY * cr * ck[c]
            self.solve_box(j_lim)
            added = False
            for k in range(2 * n):
                if penalised[k]:
                    continue
                x = self.free_rate(k, vs, acs) + self.dot(self.rate[k], u, k if k < n else k - n)
                lim = a_lim if k < n else v_lim
                if x > lim or x < -lim:
                    penalised[k] = True
                    added = True
            if not added:
                break
        first = u[0]
        self.first_at_bound = first >= j_lim or first <= -j_lim
        if self.first_at_bound:
            return j_max if first > 0.0 else -j_max
        return first / (u1 * u1 * u1)

    def solve_box(self, lim):
        n = self.runs
        state, x, u, mu = self.state, self.x, self.u, self.mu
        for j in range(n):
            x[j] = state[j] * lim
        for _ in range(MAX_ITERATIONS):
            self.solve_free(lim)
            step = 1.0
            hit = -1
            for j in range(n):
                if state[j] != 0:
                    continue
                to = u[j]
                if to > lim or to < -lim:
                    bound = lim if to > 0.0 else -lim
                    sj = (bound - x[j]) / (to - x[j])
                    if sj < step:
                        step = sj
                        hit = j
            if hit >= 0:
                for j in range(n):
                    if state[j] == 0:
                        x[j] += step * (u[j] - x[j])
                state[hit] = 1 if u[hit] > 0.0 else -1
                x[hit] = state[hit] * lim
                continue
            for j in range(n):
                x[j] = u[j]
            release = -1
            worst = 0.0
            for j in range(n):
                if state[j] == 0:
                    continue
                wrong = -state[j] * mu[j]
                if wrong > worst:
                    worst = wrong
                    release = j
            if release < 0:
                break
            state[release] = 0
        for j in range(n):
            u[j] = x[j]

    def solve_free(self, lim):
        n = self.runs
        state, u, b, hmod, rhs, free, mu = self.state, self.u, self.b, self.current, self.rhs, self.free, self.mu
        m = 0
        for j in range(n):
            if state[j] == 0:
                free[m] = j
                m += 1
            else:
                u[j] = state[j] * lim
        whole = m == n and hmod is self.hess
        chol = self.whole_factor if whole else self.factor
        for r in range(m):
            jr = free[r]
            total = b[jr]
            row = hmod[jr]
            for j in range(n):
                if state[j] != 0:
                    total -= row[j] * u[j]
            rhs[r] = total
            if not whole:
                factor_row(hmod, free, chol, r)
        for r in range(m):
            total = rhs[r]
            for k in range(r):
                total -= chol[r][k] * rhs[k]
            rhs[r] = total / chol[r][r]
        for r in range(m - 1, -1, -1):
            total = rhs[r]
            for k in range(r + 1, m):
                total -= chol[k][r] * rhs[k]
            rhs[r] = total / chol[r][r]
        for r in range(m):
            u[free[r]] = rhs[r]
        for j in range(n):
            if state[j] == 0:
                mu[j] = 0.0
            else:
                total = b[j]
                row = hmod[j]
                for k in range(n):
                    total -= row[k] * u[k]
                mu[j] = total


class JerkLimit:
    """The jerk-limited limiter, all joints at once (JerkLimiter and AxisFilter)."""

    def __init__(self, pos_min, pos_max, v_max, a_max, j_max, dt):
        lo, hi = pos_min, pos_max  # no inner margin: the operating range is the position range
        mag = np.maximum(np.maximum(np.abs(pos_min), np.abs(pos_max)), np.finfo(float).tiny)
        u = np.spacing(mag)
        eps = np.spacing(1.0)
        v_margin = 2.0 * u / dt + 16.0 * eps * v_max
        a_margin = 4.0 * u / (dt * dt) + 16.0 * eps * (v_max / dt + a_max)
        j_margin = 8.0 * u / (dt * dt * dt) + 16.0 * eps * (v_max / (dt * dt) + a_max / dt)
        pos_slack = 1024.0 * np.spacing(mag + (hi - lo))
        self.dt = dt
        self.q_lo_hard, self.q_hi_hard = lo, hi
        self.q_lo = lo + 2.0 * pos_slack
        self.q_hi = hi - 2.0 * pos_slack
        self.arrive_tol = 8.0 * pos_slack
        self.v_loose = v_max - v_margin
        self.a_loose = a_max - a_margin
        self.v_strict = self.v_loose - 1e-9 * v_max
        self.a_strict = self.a_loose - 1e-9 * a_max
        self.j_use = j_max - j_margin
        self.k1, self.k2, self.k3 = linear_zone_gains(dt)
        self.rate_gain = 1.0 - math.exp(-dt / RATE_TIME_CONSTANT)
        self.feasibility_gain = 1.0 - math.exp(-dt / FEASIBILITY_RECOVERY)
        self.drift_gain = 1.0 - math.exp(-dt / DRIFT_TIME_CONSTANT)
        self.load_gain = 1.0 - math.exp(-dt / LOAD_TIME_CONSTANT)
        self.hold_ticks = int(round(SHARE_HOLD / dt))
        self.kb = self.k1 * dt * dt * dt / 6.0 + self.k2 * dt * dt / 2.0 + self.k3 * dt
        self.pos_slack = pos_slack
        self.rest_velocity = pos_slack / dt
        self.rest_acceleration = pos_slack / (dt * dt)
        n = pos_min.shape[0]
        self.q = 0.5 * (lo + hi)
        self.v = np.zeros(n)
        self.a = np.zeros(n)
        # plan memory
        self.have_plan = np.zeros(n, dtype=bool)
        self.previous_plan_acceleration = np.zeros(n)
        self.plan_rate = np.zeros(n)
        self.tracking = np.zeros(n, dtype=bool)
        self.feasibility = np.ones(n)
        self.velocity_share = np.ones(n)
        self.feasibility_held = np.zeros(n, dtype=np.int64)
        self.velocity_share_held = np.zeros(n, dtype=np.int64)
        self.acceleration_load = np.zeros(n)
        self.previous_given_acceleration = np.zeros(n)
        self.feed_acceleration = np.zeros(n)
        self.previous_plan_position = np.zeros(n)
        self.previous_plan_velocity = np.zeros(n)
        self.drift = np.zeros(n)
        self.followable = np.ones(n)
        self.flags = np.zeros(n, dtype=np.int64)
        self.law = np.zeros(n, dtype=np.int64)
        self.base = None
        self.frame_rate = np.zeros(n)
        # the receding-horizon law, per joint
        runs = preview_runs(dt)
        self.laws = [PreviewLaw(dt, runs, PREVIEW_JERK_PRICE / float(self.j_use[i])) for i in range(n)]
        self.run_ends = self.laws[0].run_ends
        self.centres = np.array(self.laws[0].centres)
        self.horizon_ticks = self.laws[0].horizon_ticks
        self.preview_latch = np.zeros(n, dtype=np.int64)


    def recovered(self, x):
        """One tick of recovery toward 1, reaching 1 exactly once within 1e-9 of it (AxisFilter.recovered)."""
        y = x + self.feasibility_gain * (1.0 - x)
        return np.where(y > 1.0 - 1e-9, 1.0, y)
    def aged(self, share, held, had, fresh):
        """AxisFilter.FeedShare.age: a share recovers once held for SHARE_HOLD; a fresh plan starts at 1."""
        due = had & (held >= self.hold_ticks)
        share = np.where(due, self.recovered(share), np.where(fresh, 1.0, share))
        return share, np.where(had & ~due, held + 1, held)

    def asked(self, share, held, ratio, finite):
        """AxisFilter.FeedShare.ask: (FULL / ratio)^2 beyond FULL; one within HOLD_BAND of the share renews its hold."""
        with np.errstate(all="ignore"):
            limit = FEED_FORWARD_FULL / ratio
            limit = np.where(ratio > FEED_FORWARD_FULL, limit * limit, 2.0)
        asks = finite & (limit <= HOLD_BAND * share)
        return np.where(asks & (limit < share), limit, share), np.where(asks, 0, held)

    def forget_plan(self, mask):
        self.preview_latch = np.where(mask, 0, self.preview_latch)
        self.have_plan &= ~mask
        self.tracking &= ~mask
        self.plan_rate = np.where(mask, 0.0, self.plan_rate)
        self.previous_plan_acceleration = np.where(mask, 0.0, self.previous_plan_acceleration)
        self.feasibility = np.where(mask, 1.0, self.feasibility)
        self.velocity_share = np.where(mask, 1.0, self.velocity_share)
        self.followable = np.where(mask, 1.0, self.followable)
        self.drift = np.where(mask, 0.0, self.drift)

    def reset(self, position):
        """A measured pose at rest (the caller has checked it is viable)."""
        self.q = position.astype(float).copy()
        self.v = np.zeros_like(self.q)
        self.a = np.zeros_like(self.q)
        self.forget_plan(np.ones(self.q.shape[0], dtype=bool))

    # ---- the time-optimal stop
    def brake_profile(self, v0, a0):
        """Up to three (duration, jerk) phases to v = 0, a = 0; rows d0, j0, d1, j1, d2, j2."""
        J, A = self.j_use, self.a_strict
        vz = v0 + a0 * np.abs(a0) / (2.0 * J)
        s = np.where(vz > 0.0, 1.0, -1.0)
        vv = s * v0
        aa = s * a0
        ap_free = np.sqrt(np.maximum(J * vv + 0.5 * aa * aa, 0.0))
        ap = np.maximum(np.minimum(ap_free, A), -aa)
        t2 = np.where((ap < ap_free) & (ap > 0.0),
                      np.maximum((vv + aa * aa / (2.0 * J) - ap * ap / J) / ap, 0.0), 0.0)
        zero = vz == 0.0
        out = np.empty((6,) + v0.shape)
        out[0] = np.where(zero, np.abs(a0) / J, np.maximum((aa + ap) / J, 0.0))
        out[1] = np.where(zero, -np.sign(a0) * J, -s * J)
        out[2] = np.where(zero, 0.0, t2)
        out[3] = 0.0
        out[4] = np.where(zero, 0.0, ap / J)
        out[5] = np.where(zero, 0.0, s * J)
        return out

    @staticmethod
    def segment(e, j, t, track_q):
        """Advances e by t at jerk j where t > 0, tracking the extremes (AxisFilter.segment)."""
        active = t > 0.0
        q0, v0, a0 = e.q, e.v, e.a
        moving = j != 0.0
        tau = -a0 / j
        ve = v0 - a0 * a0 / (2.0 * j)
        at_ve = active & moving & (tau > 0.0) & (tau < t)
        e.v_min = np.where(at_ve & (ve < e.v_min), ve, e.v_min)
        e.v_max = np.where(at_ve & (ve > e.v_max), ve, e.v_max)
        if track_q:
            JerkLimit.position_at(e, active & ~moving & (a0 != 0.0), q0, v0, a0, j, -v0 / a0, t)
            h = 0.5 * j
            disc = a0 * a0 - 4.0 * h * v0
            w = -0.5 * (a0 + np.copysign(np.sqrt(np.maximum(disc, 0.0)), a0))
            roots = active & moving & (disc >= 0.0) & (w != 0.0)
            JerkLimit.position_at(e, roots, q0, v0, a0, j, w / h, t)
            JerkLimit.position_at(e, roots, q0, v0, a0, j, v0 / w, t)
        t2 = t * t
        nq = q0 + v0 * t + 0.5 * a0 * t2 + j * t2 * t / 6.0
        nv = v0 + a0 * t + 0.5 * j * t2
        na = a0 + j * t
        e.q = np.where(active, nq, q0)
        e.v = np.where(active, nv, v0)
        e.a = np.where(active, na, a0)
        e.q_min = np.where(active & (nq < e.q_min), nq, e.q_min)
        e.q_max = np.where(active & (nq > e.q_max), nq, e.q_max)
        e.v_min = np.where(active & (nv < e.v_min), nv, e.v_min)
        e.v_max = np.where(active & (nv > e.v_max), nv, e.v_max)
        e.a_min = np.where(active & (na < e.a_min), na, e.a_min)
        e.a_max = np.where(active & (na > e.a_max), na, e.a_max)

    @staticmethod
    def position_at(e, mask, q0, v0, a0, j, tau, t):
        inside = mask & (tau > 0.0) & (tau < t)
        qe = q0 + tau * (v0 + tau * (0.5 * a0 + tau * j / 6.0))
        e.q_min = np.where(inside & (qe < e.q_min), qe, e.q_min)
        e.q_max = np.where(inside & (qe > e.q_max), qe, e.q_max)

    def profile(self, q0, v0, a0):
        """The stop from (q0, v0, a0): its extremes, and where it ends (e.q)."""
        p = self.brake_profile(v0, a0)
        e = Extremes(q0, v0, a0)
        self.segment(e, p[1], p[0], True)
        self.segment(e, p[3], p[2], True)
        self.segment(e, p[5], p[4], True)
        return e

    def simulate_tick(self, keep, push):
        """One tick under keep * stop(t) + push from the current state: successor and extremes."""
        base = self.base
        e = Extremes(self.q, self.v, self.a)
        rem = np.full(self.q.shape, self.dt)
        for k in range(3):
            d = np.minimum(base[2 * k], rem)
            self.segment(e, keep * base[2 * k + 1] + push, d, False)
            rem = np.where(d > 0.0, rem - d, rem)
        brake_done = rem > 0.0
        self.segment(e, push, rem, False)
        settle = brake_done & (push == 0.0) & (keep != 0.0)
        return e.q, np.where(settle, 0.0, e.v), np.where(settle, 0.0, e.a), e

    def feasible(self, keep, push, direction, wall, strict):
        """Per joint: OK or the first bound the tick under keep * stop + push breaks (AxisFilter.feasible)."""
        nq, nv, na, e = self.simulate_tick(keep, push)
        a_b = self.a_strict if strict else self.a_loose
        v_b = self.v_strict if strict else self.v_loose
        fail_a = (e.a_min < -a_b) | (e.a_max > a_b)
        fail_v = (e.v_min < -v_b) | (e.v_max > v_b)
        p = self.profile(nq, nv, na)
        fail_pv = (p.v_min < -v_b) | (p.v_max > v_b)
        if strict:
            fail_p = (p.q_min < self.q_lo) | (p.q_max > self.q_hi)
        else:
            fail_p = (p.q_min < self.q_lo_hard) | (p.q_max > self.q_hi_hard)
        rest = self.profile(nq - wall, nv - self.frame_rate, na).q
        fail_t = ((direction > 0) & (rest > 0.0)) | ((direction < 0) & (rest < 0.0))
        return np.select([fail_a, fail_v, fail_pv, fail_p, fail_t],
                         [FAIL_ACCELERATION, FAIL_VELOCITY, FAIL_VELOCITY, FAIL_POSITION, FAIL_TARGET], OK)

    @staticmethod
    def flag_of(code):
        return np.select([code == FAIL_ACCELERATION, code == FAIL_VELOCITY, code == FAIL_POSITION],
                         [ACCELERATION, VELOCITY, POSITION], 0)

    def bisect(self, mask, push, direction, wall, steps, full_code):
        """The largest blend lambda toward push (2^-steps resolution) that passes feasible, where mask."""
        n = self.q.shape[0]
        lo, hi, hi_code = np.zeros(n), np.ones(n), full_code.copy()
        if not mask.any():
            return lo, hi_code
        for _ in range(steps):
            mid = 0.5 * (lo + hi)
            c = self.feasible(1.0 - mid, mid * push, direction, wall, True)
            ok = c == OK
            lo = np.where(ok, mid, lo)
            hi = np.where(ok, hi, mid)
            hi_code = np.where(ok, hi_code, c)
        return lo, hi_code

    def preview_beyond(self, preview):
        """AxisFilter.previewBeyond per joint: divided differences of the run means beyond 0.9 of V or A."""
        c = self.centres
        v_lim = FEED_FORWARD_FULL * self.v_strict
        a_lim = FEED_FORWARD_FULL * self.a_strict / 2.0
        beyond = np.zeros(preview.shape[0], dtype=bool)
        d1_prev = None
        for b in range(1, preview.shape[1]):
            d1 = (preview[:, b] - preview[:, b - 1]) / (c[b] - c[b - 1])
            beyond |= np.abs(d1) > v_lim
            if b >= 2:
                beyond |= np.abs((d1 - d1_prev) / (c[b] - c[b - 2])) > a_lim
            d1_prev = d1
        return beyond

    def follow(self, p, pv, pa, preview=None):
        """One tick along a plan (position, velocity /s, acceleration /s^2 per joint) and, if given, its
        preview (D, runs); the flags per joint."""
        n = p.shape[0]
        dt = self.dt
        self.base = self.brake_profile(self.v, self.a)
        finite = np.isfinite(p) & np.isfinite(pv) & np.isfinite(pa)
        non_finite = ~finite
        self.forget_plan(non_finite)
        zeros = np.zeros(n)
        flags = np.where(non_finite, NON_FINITE_TARGET, 0)
        # the plan, clamped to what the limiter may follow
        wall = np.where(finite, p, 0.0)
        fv = np.where(finite, pv, 0.0)
        fa = np.where(finite, pa, 0.0)
        outside = finite & ((wall > self.q_hi) | (wall < self.q_lo))
        wall = np.where(outside, np.where(wall > self.q_hi, self.q_hi, self.q_lo), wall)
        fv = np.where(outside, 0.0, fv)
        fa = np.where(outside, 0.0, fa)
        flags |= np.where(outside, POSITION, 0)
        fast = finite & ((fv > self.v_strict) | (fv < -self.v_strict))
        fv = np.where(fast, np.where(fv > 0.0, self.v_strict, -self.v_strict), fv)
        flags |= np.where(fast, VELOCITY, 0)
        hard = finite & ((fa > self.a_strict) | (fa < -self.a_strict))
        fa = np.where(hard, np.where(fa > 0.0, self.a_strict, -self.a_strict), fa)
        flags |= np.where(hard, ACCELERATION, 0)
        # the plan memory: acceleration fed forward within the jerk bound, rate, share, drift
        had = finite & self.have_plan
        fresh = finite & ~self.have_plan
        most = self.j_use * dt
        step = fa - self.feed_acceleration
        step = np.where((step > most) | (step < -most), np.where(step > 0.0, most, -most), step)
        jff = np.where(had, step / dt, 0.0)
        self.feed_acceleration = np.where(had, self.feed_acceleration + step,
                                          np.where(fresh, fa, self.feed_acceleration))
        self.plan_rate = np.where(had, self.plan_rate + self.rate_gain * (fv - self.plan_rate),
                                  np.where(fresh, fv, self.plan_rate))
        self.feasibility, self.feasibility_held = self.aged(self.feasibility, self.feasibility_held, had, fresh)
        self.velocity_share, self.velocity_share_held = self.aged(self.velocity_share, self.velocity_share_held,
                                                                  had, fresh)
        with np.errstate(all="ignore"):
            given_load = np.abs(pa) / self.a_strict
        self.acceleration_load = np.where(had, self.acceleration_load + self.load_gain * (given_load - self.acceleration_load),
                                          np.where(fresh, given_load, self.acceleration_load))
        self.previous_given_acceleration = np.where(fresh, pa, self.previous_given_acceleration)
        moved = wall - self.previous_plan_position
        explained = dt * (0.5 * (fv + self.previous_plan_velocity)
                          - dt * (fa - self.previous_plan_acceleration) / 12.0)
        mismatch = (moved - explained) / dt
        mismatch = np.where((mismatch > self.v_strict) | (mismatch < -self.v_strict),
                            np.where(mismatch > 0.0, self.v_strict, -self.v_strict), mismatch)
        self.drift = np.where(had, self.drift + self.drift_gain * (mismatch - self.drift),
                              np.where(fresh, 0.0, self.drift))
        with np.errstate(all="ignore"):
            jerk_ratio = np.abs(pa - self.previous_given_acceleration) / (dt * self.j_use)
            ratio = np.maximum(np.maximum(np.abs(pv) / self.v_strict, np.abs(pa) / self.a_strict), jerk_ratio)
            velocity_ratio = np.maximum(np.abs(pv) / self.v_strict, LOAD_WEIGHT * self.acceleration_load)
        self.previous_given_acceleration = np.where(finite, pa, self.previous_given_acceleration)
        followable = self.recovered(self.followable)
        followable = np.where(np.abs(fa - self.feed_acceleration) > FOLLOW_DEFICIT * self.a_strict, 0.0, followable)
        self.followable = np.where(finite, followable, self.followable)
        self.feasibility, self.feasibility_held = self.asked(self.feasibility, self.feasibility_held, ratio, finite)
        self.velocity_share, self.velocity_share_held = self.asked(self.velocity_share, self.velocity_share_held,
                                                                   velocity_ratio, finite)
        self.previous_plan_acceleration = np.where(finite, fa, self.previous_plan_acceleration)
        self.previous_plan_position = np.where(finite, wall, self.previous_plan_position)
        self.previous_plan_velocity = np.where(finite, fv, self.previous_plan_velocity)
        self.have_plan |= finite
        plan_at_rest = (fv == 0.0) & (fa == 0.0)
        # a plan at rest to within the position's rounding slack (a blend of equal poses may come back
        # an ulp off, with derivatives of 1e-13) is held
        hold = (finite & (self.v == 0.0) & (self.a == 0.0) & (np.abs(self.q - wall) <= self.pos_slack)
                & (np.abs(fv) <= self.rest_velocity) & (np.abs(fa) <= self.rest_acceleration))

        # the receding-horizon law where the plan, now or ahead, is beyond 0.9 of a bound
        mpc = np.zeros(n, dtype=bool)
        mpc_ok = np.zeros(n, dtype=bool)
        mpc_jerk = np.zeros(n)
        mpc_bound = np.zeros(n, dtype=bool)
        if preview is not None:
            with np.errstate(all="ignore"):
                ask = (ratio > FEED_FORWARD_FULL) | ((flags & (POSITION | VELOCITY | ACCELERATION)) != 0)
            latch = finite & ~hold & (ask | self.preview_beyond(preview))
            self.preview_latch = np.where(latch, self.horizon_ticks,
                                          np.where(finite & (self.preview_latch > 0), self.preview_latch - 1,
                                                   self.preview_latch))
            mpc = finite & ~hold & (self.preview_latch > 0)
            for i in np.flatnonzero(mpc):
                law = self.laws[i]
                mpc_jerk[i] = law.bounded_jerk(float(self.q[i]), float(self.v[i]), float(self.a[i]),
                                                 preview[i].tolist(), float(self.j_use[i]), float(self.a_strict[i]),
                                                 float(self.v_strict[i]))
                mpc_bound[i] = law.first_at_bound
            mpc_ok = mpc & np.isfinite(mpc_jerk)
            flags |= np.where(mpc_ok & mpc_bound, JERK, 0)

        # the linear zone: state feedback on the error predicted at the end of the tick
        q0 = self.q + dt * (self.v + 0.5 * dt * self.a)
        v0 = self.v + dt * self.a
        feed_forward = (self.feasibility * ((1.0 - self.kb) * jff + self.k3 * self.feed_acceleration)
                        + self.velocity_share * self.k2 * (fv + self.drift))
        jerk = feed_forward + self.k1 * (wall - q0) - self.k2 * v0 - self.k3 * self.a
        zone = np.where(self.tracking, EXIT_SHARE * self.j_use, ENTRY_SHARE * self.j_use)
        linear = finite & ~hold & ~mpc & ~plan_at_rest & (jerk <= zone) & (jerk >= -zone)
        clipped = linear & ((jerk > self.j_use) | (jerk < -self.j_use))
        jerk = np.where(clipped, np.where(jerk > 0.0, self.j_use, -self.j_use), jerk)
        flags |= np.where(clipped, JERK, 0)
        far = finite & ~hold & ~linear & ~mpc_ok
        self.tracking = np.where(finite, linear | mpc_ok, self.tracking)
        # the receding-horizon law's jerk goes through the linear zone's shield
        receding = mpc_ok
        jerk = np.where(receding, mpc_jerk, jerk)
        linear = linear | receding

        # the minimum-time law, in the frame of the plan's lagged rate only on a plan inside the bounds
        rate = np.where(plan_at_rest | (self.feasibility < 1.0) | (self.followable < 1.0), 0.0, self.plan_rate)
        self.frame_rate = np.where(far, rate, 0.0)
        lead = self.profile(self.q - (wall - rate * dt), self.v - rate, self.a).q
        direction = np.where(lead < -self.arrive_tol, 1,
                             np.where(lead > self.arrive_tol, -1,
                                      np.where(rate != 0.0, np.where(rate > 0.0, 1, -1), 0)))
        direction = np.where(far, direction, 0)
        steer = far & (direction != 0)
        at_rest = far & (direction == 0)

        # successor per joint: keep * stop + push over the tick (the last simulate_tick of each path)
        keep = np.ones(n)
        push = zeros
        law = np.zeros(n, dtype=np.int64)
        # stop (non-finite plan) and the minimum-time law at rest: the stop profile, a hold once at rest
        stopping = non_finite | at_rest
        if stopping.any():
            code = self.feasible(1.0, zeros, np.zeros(n, dtype=np.int64), zeros, False)
            flags |= np.where(stopping & (code != OK), NOT_VIABLE, 0)
            law = np.where(non_finite, 6, np.where(at_rest, 5, law))
            law = np.where(stopping & (code != OK), 7, law)
        # the linear zone inside its shield
        if linear.any():
            full = self.feasible(0.0, jerk, np.zeros(n, dtype=np.int64), zeros, True)
            ok = linear & (full == OK)
            keep = np.where(ok, 0.0, keep)
            push = np.where(ok, jerk, push)
            law = np.where(ok, np.where(receding, 8, 1), law)
            rest = linear & (full != OK)
            if rest.any():
                none = self.feasible(1.0, zeros, np.zeros(n, dtype=np.int64), zeros, False)
                stuck = rest & (none != OK)
                flags |= np.where(stuck, NOT_VIABLE, 0)
                law = np.where(stuck, 7, law)
                shield = rest & (none == OK)
                lo, hi_code = self.bisect(shield, jerk, np.zeros(n, dtype=np.int64), zeros,
                                          TRACK_BISECTION_STEPS, full)
                keep = np.where(shield, 1.0 - lo, keep)
                push = np.where(shield, lo * jerk, push)
                flags |= np.where(shield, self.flag_of(hi_code), 0)
                law = np.where(shield, np.where(receding, 9, 2), law)
        # the minimum-time law toward the plan
        if steer.any():
            full_push = direction * self.j_use
            full = self.feasible(0.0, full_push, direction, wall, True)
            ok = steer & (full == OK)
            keep = np.where(ok, 0.0, keep)
            push = np.where(ok, full_push, push)
            flags |= np.where(ok, JERK, 0)
            law = np.where(ok, 3, law)
            rest = steer & (full != OK)
            if rest.any():
                none = self.feasible(1.0, zeros, direction, wall, False)
                stuck = rest & (none != OK) & (none != FAIL_TARGET)
                flags |= np.where(stuck, NOT_VIABLE, 0)
                law = np.where(stuck, 7, law)
                search = rest & ~stuck
                lo, hi_code = self.bisect(search, full_push, direction, wall, BISECTION_STEPS, full)
                keep = np.where(search, 1.0 - lo, keep)
                push = np.where(search, lo * full_push, push)
                flags |= np.where(search, self.flag_of(hi_code), 0)
                law = np.where(search, 4, law)
        nq, nv, na, _ = self.simulate_tick(keep, push)
        # commit (not on a hold: nothing moves), with the last-resort clamp
        move = ~hold
        over = move & (nq > self.q_hi_hard)
        under = move & ~over & (nq < self.q_lo_hard)
        flags |= np.where(over | under, POSITION_CLAMPED, 0)
        nq = np.where(over, self.q_hi_hard, np.where(under, self.q_lo_hard, nq))
        self.q = np.where(move, nq, self.q)
        self.v = np.where(move, nv, self.v)
        self.a = np.where(move, na, self.a)
        self.law = np.where(hold, 0, law)
        self.flags = flags
        return flags


# ---------------------------------------------------------------------------------------- tick

class Tick:
    """Plan state, limiter, frame: one control tick (TickWorkload.tick)."""

    def __init__(self, spec):
        d, k = spec["joints"], spec["steps"]
        if spec["interpolation"] != "CUBIC_SPLINE":
            raise ValueError("this port resamples by the natural cubic spline only, not " + spec["interpolation"])
        self.window = spec["window"]
        self.first = spec["first_tick"]
        self.tick_rate = spec["tick_rate"]
        self.period = spec["period_s"]
        self.plan = EnsemblePlan(d, k, spec["step_ratio"], spec["weight_rate"], spec["taper_steps"])
        for c, (origin, now) in zip(spec["chunks"], spec["chunk_ticks"]):
            self.plan.accept(np.array(c).reshape(k, d), origin, now)
        bound = np.full(d, spec["position_bound"])
        self.limiter = JerkLimit(-bound, bound, np.full(d, spec["velocity"]), np.full(d, spec["acceleration"]),
                                 np.full(d, spec["jerk"]), spec["period_s"])
        self.target = np.empty(d)
        self.velocity = np.empty(d)
        self.acceleration = np.empty(d)
        self.frame_positions = np.empty(d)
        self.frame_velocities = np.empty(d)
        self.emitted = 0
        self.plan.state_at(self.first, self.target, self.velocity, self.acceleration)
        self.limiter.reset(self.target + np.array(spec["start_offsets"]))
        self.previous_command = self.limiter.q.copy()
        self.preview = bool(spec.get("preview", False))
        if self.preview and list(spec["preview_run_ends"]) != self.limiter.run_ends:
            raise ValueError("the preview's runs differ from weft's: %s against %s"
                             % (self.limiter.run_ends, spec["preview_run_ends"]))

    def run(self, tick):
        plan_tick = self.first + (tick & (self.window - 1))
        if self.plan.state_at(plan_tick, self.target, self.velocity, self.acceleration):
            self.velocity *= self.tick_rate
            self.acceleration *= self.tick_rate * self.tick_rate
        else:
            self.target[:] = np.nan
            self.velocity[:] = 0.0
            self.acceleration[:] = 0.0
        remaining = self.plan.ticks_remaining(plan_tick)
        preview = self.plan.preview_means(plan_tick, self.limiter.run_ends) if self.preview and remaining > 0 else None
        flags = int(np.bitwise_or.reduce(self.limiter.follow(self.target, self.velocity, self.acceleration, preview)))
        command = self.limiter.q
        self.frame_positions[:] = command
        np.divide(command - self.previous_command, self.period, out=self.frame_velocities)
        if np.isfinite(self.frame_positions).all() and np.isfinite(self.frame_velocities).all():
            self.previous_command[:] = command
            self.emitted += 1
        return flags ^ remaining


def main(argv):
    if len(argv) < 2:
        print(__doc__, file=sys.stderr)
        return 2
    timed = 2000
    if "--timed-ticks" in argv:
        timed = int(argv[argv.index("--timed-ticks") + 1])
    if "--check-only" in argv:
        timed = 0
    with open(argv[1]) as f:
        spec = json.load(f)
    fields = spec["fields"]
    rows = spec["ticks"]
    expected = np.array([[r[fields.index(name)] for name in fields[:-1]] for r in rows])  # (ticks, 6, D)
    expected_flags = np.array([r[fields.index("flags")] for r in rows], dtype=np.int64)
    np.seterr(all="ignore")

    tick = Tick(spec)
    worst = np.zeros(expected.shape[1])
    flag_mismatches = 0
    laws = np.zeros(len(LAWS), dtype=np.int64)
    for n in range(expected.shape[0]):
        tick.run(n)
        lim = tick.limiter
        got = np.stack([tick.target, tick.velocity, tick.acceleration, lim.q, lim.v, lim.a])
        difference = np.abs(got - expected[n])
        difference[np.isnan(difference)] = np.inf  # a NaN on either side is a difference, never a match
        worst = np.maximum(worst, difference.max(axis=1))
        flag_mismatches += int((lim.flags != expected_flags[n]).sum())
        laws += np.bincount(lim.law, minlength=len(LAWS))
    print("checked %d ticks against weft: largest difference target %.3g, velocity %.3g, acceleration %.3g, "
          "command %.3g, command velocity %.3g, command acceleration %.3g; flags differ on %d joint-ticks"
          % ((expected.shape[0],) + tuple(worst) + (flag_mismatches,)))
    total = laws.sum()
    print("limiter laws over %d joint-ticks: " % total
          + ", ".join("%s %.1f %%" % (name, 100.0 * c / total) for name, c in zip(LAWS, laws) if c))
    print("numpy-check joints=%d steps=%d motion=%s ticks=%d largest_difference=%g flag_mismatches=%d"
          % (spec["joints"], spec["steps"], spec["motion"], expected.shape[0], worst.max(), flag_mismatches))
    if not worst.max() <= TOLERANCE or flag_mismatches:
        print("numpy tick differs from weft by more than %g (or in its flags)" % TOLERANCE, file=sys.stderr)
        return 1
    if timed <= 0:
        return 0

    fresh = Tick(spec)
    for n in range(200):  # warm-up: first calls of each NumPy path
        fresh.run(n)
    samples = np.empty(timed, dtype=np.int64)
    clock = time.perf_counter_ns
    for i in range(timed):
        n = 200 + i
        t = clock()
        fresh.run(n)
        samples[i] = clock() - t
    print("numpy-tick joints=%d steps=%d motion=%s ticks=%d median_ns=%d mean_ns=%d p99_ns=%d numpy=%s python=%s"
          % (spec["joints"], spec["steps"], spec["motion"], timed, np.median(samples), samples.mean(),
             np.percentile(samples, 99), np.__version__, sys.version.split()[0]))
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
