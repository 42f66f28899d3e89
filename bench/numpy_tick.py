#!/usr/bin/env python3
"""The control tick written plainly with NumPy, checked against weft's own output, then timed.

The tick is the one dev.weft.bench.TickWorkload runs: the read-out of a temporal-ensembling plan
(oldest first, weights exp(-m*i), linear resampling at step ratio 1), the jerk-limited limiter,
and the copy of the command into a preallocated frame with the finite check.

The limiter is the same discrete algorithm as weft's (dev.weft.safety.AxisFilter): per joint,
the time-optimal stop of a third-order integrator chain with bounded velocity, acceleration and
jerk (the double-S stop of Biagiotti and Melchiorri, Trajectory Planning for Automatic Machines
and Robots, Springer 2008, section 3.4), and each tick the largest blend between that stop and a
full jerk toward the target, found by 24 bisection steps, that keeps every bound. It is written
the NumPy way: every joint at once, branches as masks, the bisection over all joints together.

Usage: numpy_tick.py EXPORT.json [--timed-ticks N]
  EXPORT.json  written by dev.weft.bench.TickExport (the accepted chunks, the limits and weft's
               target, command and velocity for every tick)
Prints the largest differences from weft's output, then one line
  numpy-tick joints=D steps=K ticks=N median_ns=... mean_ns=... p99_ns=...
and exits with 1 when the outputs differ by more than TOLERANCE.
"""

import json
import sys
import time

import numpy as np

TOLERANCE = 1e-9
"""Largest difference from weft's output accepted as equal (rad, rad/s)."""

OK, FAIL_ACCELERATION, FAIL_VELOCITY, FAIL_POSITION, FAIL_TARGET = 0, 1, 2, 3, 4
POSITION, VELOCITY, ACCELERATION, JERK = 1, 2, 4, 8
NON_FINITE_TARGET, NOT_VIABLE, POSITION_CLAMPED = 16, 32, 64
BISECTION_STEPS = 24
NO_TICK = -(2 ** 63)


class EnsemblePlan:
    """Temporal ensembling, oldest prediction first: a ring of per-tick weighted sums."""

    def __init__(self, joints, max_steps, m):
        capacity = 1
        while capacity < max_steps:
            capacity *= 2
        self.mask = capacity - 1
        self.decay = np.exp(-m)
        self.weighted = np.zeros((capacity, joints))
        self.weights = np.zeros(capacity)
        self.next_weight = np.zeros(capacity)
        self.slot_tick = np.full(capacity, NO_TICK, dtype=np.int64)
        self.last_now = NO_TICK
        self.plan_end = NO_TICK

    def accept(self, chunk, origin, now):
        """chunk: (K, D). Resamples steps onto ticks now..origin+K-1 (linear) and merges them."""
        k = chunk.shape[0]
        end = origin + (k - 1)
        ticks = np.arange(now, end + 1, dtype=np.int64)
        u = (ticks - origin).astype(float)
        j = np.minimum(np.floor(u).astype(np.int64), k - 2)
        s = np.clip(u - j, 0.0, 1.0)[:, None]
        a, b = chunk[j], chunk[j + 1]
        values = np.where(s == 1.0, b, a + s * (b - a))
        slots = ticks & self.mask
        had = (self.plan_end != NO_TICK) & (ticks <= self.plan_end) & (self.slot_tick[slots] == ticks)
        fresh = slots[~had]
        self.weighted[fresh] = values[~had]
        self.weights[fresh] = 1.0
        self.next_weight[fresh] = self.decay
        old = slots[had]
        w = self.next_weight[old]
        self.weighted[old] += w[:, None] * values[had]
        self.weights[old] += w
        self.next_weight[old] = w * self.decay
        self.slot_tick[slots] = ticks
        self.last_now = now
        self.plan_end = max(self.plan_end, end)

    def action_at(self, tick, out):
        slot = tick & self.mask
        if not (self.plan_end != NO_TICK and self.last_now <= tick <= self.plan_end
                and self.slot_tick[slot] == tick):
            return False
        np.divide(self.weighted[slot], self.weights[slot], out=out)
        return True

    def ticks_remaining(self, tick):
        slot = tick & self.mask
        ok = self.plan_end != NO_TICK and self.last_now <= tick <= self.plan_end and self.slot_tick[slot] == tick
        return self.plan_end - tick + 1 if ok else 0


class Scratch:
    """State advanced along constant-jerk segments, with the extremes met on the way."""
    __slots__ = ("q", "v", "a", "q_min", "q_max", "v_min", "v_max", "a_min", "a_max")


class JerkLimit:
    """The jerk-limited limiter, all joints at once."""

    def __init__(self, pos_min, pos_max, v_max, a_max, j_max, dt):
        lo, hi = pos_min, pos_max
        mag = np.maximum(np.maximum(np.abs(pos_min), np.abs(pos_max)), np.finfo(float).tiny)
        u = np.spacing(mag)
        eps = np.spacing(1.0)
        v_margin = 2.0 * u / dt + 16.0 * eps * v_max
        a_margin = 4.0 * u / (dt * dt) + 16.0 * eps * (v_max / dt + a_max)
        j_margin = 8.0 * u / (dt * dt * dt) + 16.0 * eps * (v_max / (dt * dt) + a_max / dt)
        pos_slack = 1024.0 * np.spacing(mag + (hi - lo))
        self.dt = dt
        self.q_lo_hard, self.q_hi_hard = lo, hi
        self.pos_slack = pos_slack
        self.q_lo = lo + 2.0 * pos_slack
        self.q_hi = hi - 2.0 * pos_slack
        self.arrive_tol = 8.0 * pos_slack
        self.v_loose = v_max - v_margin
        self.a_loose = a_max - a_margin
        self.v_strict = self.v_loose - 1e-9 * v_max
        self.a_strict = self.a_loose - 1e-9 * a_max
        self.j_use = j_max - j_margin
        n = pos_min.shape[0]
        self.q = 0.5 * (lo + hi)
        self.v = np.zeros(n)
        self.a = np.zeros(n)
        self.target_rate = np.zeros(n)
        self.previous_wall = np.zeros(n)
        self.have_previous = np.zeros(n, dtype=bool)
        self.s = Scratch()

    def reset(self, position):
        self.q = position.astype(float).copy()
        self.v[:] = 0.0
        self.a[:] = 0.0
        self.have_previous[:] = False
        self.target_rate[:] = 0.0

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

    def segment(self, j, t, track_q):
        """Advances the scratch state by t at jerk j where t > 0, tracking the extremes."""
        sc = self.s
        active = t > 0.0
        q0, v0, a0 = sc.q, sc.v, sc.a
        moving = j != 0.0
        tau = -a0 / j
        ve = v0 - a0 * a0 / (2.0 * j)
        at_ve = active & moving & (tau > 0.0) & (tau < t)
        sc.v_min = np.where(at_ve & (ve < sc.v_min), ve, sc.v_min)
        sc.v_max = np.where(at_ve & (ve > sc.v_max), ve, sc.v_max)
        if track_q:
            self.position_at(active & ~moving & (a0 != 0.0), q0, v0, a0, j, -v0 / a0, t)
            h = 0.5 * j
            disc = a0 * a0 - 4.0 * h * v0
            w = -0.5 * (a0 + np.copysign(np.sqrt(np.maximum(disc, 0.0)), a0))
            roots = active & moving & (disc >= 0.0) & (w != 0.0)
            self.position_at(roots, q0, v0, a0, j, w / h, t)
            self.position_at(roots, q0, v0, a0, j, v0 / w, t)
        t2 = t * t
        nq = q0 + v0 * t + 0.5 * a0 * t2 + j * t2 * t / 6.0
        nv = v0 + a0 * t + 0.5 * j * t2
        na = a0 + j * t
        sc.q = np.where(active, nq, q0)
        sc.v = np.where(active, nv, v0)
        sc.a = np.where(active, na, a0)
        sc.q_min = np.where(active, np.minimum(sc.q_min, nq), sc.q_min)
        sc.q_max = np.where(active, np.maximum(sc.q_max, nq), sc.q_max)
        sc.v_min = np.where(active, np.minimum(sc.v_min, nv), sc.v_min)
        sc.v_max = np.where(active, np.maximum(sc.v_max, nv), sc.v_max)
        sc.a_min = np.where(active, np.minimum(sc.a_min, na), sc.a_min)
        sc.a_max = np.where(active, np.maximum(sc.a_max, na), sc.a_max)

    def position_at(self, mask, q0, v0, a0, j, tau, t):
        inside = mask & (tau > 0.0) & (tau < t)
        qe = q0 + tau * (v0 + tau * (0.5 * a0 + tau * j / 6.0))
        sc = self.s
        sc.q_min = np.where(inside & (qe < sc.q_min), qe, sc.q_min)
        sc.q_max = np.where(inside & (qe > sc.q_max), qe, sc.q_max)

    def start(self, q0, v0, a0):
        sc = self.s
        sc.q, sc.v, sc.a = q0, v0, a0
        sc.q_min, sc.q_max = q0, q0
        sc.v_min, sc.v_max = v0, v0
        sc.a_min, sc.a_max = a0, a0

    def profile(self, q0, v0, a0):
        """Runs the stop from (q0, v0, a0); returns the scratch state with its extremes."""
        p = self.brake_profile(v0, a0)
        self.start(q0, v0, a0)
        self.segment(p[1], p[0], True)
        self.segment(p[3], p[2], True)
        self.segment(p[5], p[4], True)
        return self.s

    def simulate_tick(self, base, lam, direction):
        """One tick under the blend of the stop `base` and a full jerk toward `direction`."""
        self.start(self.q, self.v, self.a)
        rem = np.full(self.q.shape, self.dt)
        push = lam * direction * self.j_use
        keep = 1.0 - lam
        for k in range(3):
            d = np.minimum(base[2 * k], rem)
            self.segment(keep * base[2 * k + 1] + push, d, False)
            rem = np.where(d > 0.0, rem - d, rem)
        brake_done = rem > 0.0
        self.segment(push, rem, False)
        sc = self.s
        settle = brake_done & (push == 0.0)
        return (sc.q, np.where(settle, 0.0, sc.v), np.where(settle, 0.0, sc.a),
                sc.v_min, sc.v_max, sc.a_min, sc.a_max)

    def feasible(self, base, lam, direction, wall, strict):
        nq, nv, na, tv_min, tv_max, ta_min, ta_max = self.simulate_tick(base, lam, direction)
        a_b = self.a_strict if strict else self.a_loose
        v_b = self.v_strict if strict else self.v_loose
        slack = 0.0 if strict else self.pos_slack
        fail_a = (ta_min < -a_b) | (ta_max > a_b)
        fail_v = (tv_min < -v_b) | (tv_max > v_b)
        p = self.profile(nq, nv, na)
        fail_pv = (p.v_min < -v_b) | (p.v_max > v_b)
        fail_p = (p.q_min < self.q_lo - slack) | (p.q_max > self.q_hi + slack)
        rest = self.profile(nq - wall, nv - self.target_rate, na).q
        fail_t = ((direction > 0) & (rest > 0.0)) | ((direction < 0) & (rest < 0.0))
        return np.select([fail_a, fail_v, fail_pv, fail_p, fail_t],
                         [FAIL_ACCELERATION, FAIL_VELOCITY, FAIL_VELOCITY, FAIL_POSITION, FAIL_TARGET], OK)

    def apply(self, target, command):
        """One tick toward `target` (any values); writes `command`; returns the OR of the flags."""
        n = target.shape[0]
        flags = np.zeros(n, dtype=np.int64)
        base = self.brake_profile(self.v, self.a)
        finite = np.isfinite(target)
        flags |= np.where(finite, 0, NON_FINITE_TARGET)
        wall = np.where(finite, target, 0.0)
        above = finite & (wall > self.q_hi)
        below = finite & ~above & (wall < self.q_lo)
        wall = np.where(above, self.q_hi, np.where(below, self.q_lo, wall))
        flags |= np.where(above | below, POSITION, 0)
        rate = np.where(self.have_previous, (wall - self.previous_wall) / self.dt, 0.0)
        self.target_rate = np.where(finite, np.maximum(-self.v_strict, np.minimum(self.v_strict, rate)),
                                    self.target_rate)
        self.previous_wall = np.where(finite, wall, self.previous_wall)
        lead = self.profile(self.q - (wall - self.target_rate * self.dt), self.v - self.target_rate, self.a).q
        direction = np.where(lead < -self.arrive_tol, 1,
                             np.where(lead > self.arrive_tol, -1,
                                      np.where(self.target_rate != 0.0,
                                               np.where(self.target_rate > 0.0, 1, -1), 0)))
        direction = np.where(finite, direction, 0)
        self.target_rate = np.where(direction == 0, 0.0, self.target_rate)
        self.have_previous = finite
        lam = np.zeros(n)
        steering = direction != 0
        full = self.feasible(base, np.ones(n), direction, wall, True)
        none = self.feasible(base, np.zeros(n), direction, wall, False)
        full_ok = steering & (full == OK)
        lam = np.where(full_ok, 1.0, lam)
        flags |= np.where(full_ok, JERK, 0)
        searching = steering & (full != OK)
        stuck = searching & (none != OK) & (none != FAIL_TARGET)
        flags |= np.where(stuck | (~steering & (none != OK)), NOT_VIABLE, 0)
        bisect = searching & ~stuck
        if bisect.any():
            lo, hi, hi_code = np.zeros(n), np.ones(n), full
            for _ in range(BISECTION_STEPS):
                mid = 0.5 * (lo + hi)
                c = self.feasible(base, mid, direction, wall, True)
                ok = c == OK
                lo = np.where(ok, mid, lo)
                hi = np.where(ok, hi, mid)
                hi_code = np.where(ok, hi_code, c)
            lam = np.where(bisect, lo, lam)
            bound = np.select([hi_code == FAIL_ACCELERATION, hi_code == FAIL_VELOCITY, hi_code == FAIL_POSITION],
                              [ACCELERATION, VELOCITY, POSITION], 0)
            flags |= np.where(bisect, bound, 0)
        nq, nv, na = self.simulate_tick(base, lam, direction)[:3]
        over = nq > self.q_hi_hard
        under = ~over & (nq < self.q_lo_hard)
        flags |= np.where(over | under, POSITION_CLAMPED, 0)
        self.q = np.where(over, self.q_hi_hard, np.where(under, self.q_lo_hard, nq))
        self.v = nv
        self.a = na
        command[:] = self.q
        return int(np.bitwise_or.reduce(flags))


class Tick:
    """Read-out, limiter, frame: one control tick."""

    def __init__(self, spec):
        d, k = spec["joints"], spec["steps"]
        self.window = spec["window"]
        self.plan = EnsemblePlan(d, k, spec["weight_rate"])
        for c in spec["chunks"]:
            self.plan.accept(np.array(c).reshape(k, d), 0, 0)
        bound = np.full(d, spec["position_bound"])
        self.limiter = JerkLimit(-bound, bound, np.full(d, spec["velocity"]), np.full(d, spec["acceleration"]),
                                 np.full(d, spec["jerk"]), spec["period_s"])
        self.target = np.empty(d)
        self.command = np.empty(d)
        self.frame_positions = np.empty(d)
        self.frame_velocities = np.empty(d)
        self.emitted = 0
        self.plan.action_at(0, self.target)
        self.limiter.reset(self.target)

    def run(self, tick):
        plan_tick = tick & (self.window - 1)
        if not self.plan.action_at(plan_tick, self.target):
            self.target[:] = np.nan
        remaining = self.plan.ticks_remaining(plan_tick)
        flags = self.limiter.apply(self.target, self.command)
        self.frame_positions[:] = self.command
        self.frame_velocities[:] = self.limiter.v
        if np.isfinite(self.frame_positions).all() and np.isfinite(self.frame_velocities).all():
            self.emitted += 1
        return flags ^ remaining


def main(argv):
    if len(argv) < 2:
        print(__doc__, file=sys.stderr)
        return 2
    timed = 2000
    if "--timed-ticks" in argv:
        timed = int(argv[argv.index("--timed-ticks") + 1])
    with open(argv[1]) as f:
        spec = json.load(f)
    expected = np.array(spec["ticks"])  # (ticks, 3, D): target, command, velocity
    np.seterr(all="ignore")

    tick = Tick(spec)
    worst = np.zeros(3)
    for n in range(expected.shape[0]):
        tick.run(n)
        got = np.stack([tick.target, tick.command, tick.limiter.v])
        worst = np.maximum(worst, np.abs(got - expected[n]).max(axis=1))
    print("checked %d ticks against weft: largest difference target %.3g, command %.3g, velocity %.3g"
          % (expected.shape[0], worst[0], worst[1], worst[2]))
    if worst.max() > TOLERANCE:
        print("numpy tick differs from weft by more than %g" % TOLERANCE, file=sys.stderr)
        return 1

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
