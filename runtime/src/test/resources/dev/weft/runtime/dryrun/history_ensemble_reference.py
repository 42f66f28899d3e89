#!/usr/bin/env python3
"""An independent NumPy reference for a dry run of a state-and-history policy.

Written from the time model in docs/architecture.md and the published method, not from weft's
code: a policy takes the current state and the k previous states, oldest first, one control
period apart; it is a two-layer perceptron y = tanh(x W1 + b1) W2 + b2 over
x = [state, h_0 ... h_{k-1}]; the recording is sampled at the control period, so tick n observes
sample n. A query is due every `every` ticks; its chunk's origin is the tick of its observation;
it arrives `latency` ticks later, and of its K actions (action j meant for tick origin + j) those
whose tick is before the arrival are dropped. Every tick's target is naive exponential temporal
ensembling (Zhao, Kumar, Levine and Finn, 2023): all chunks that have arrived and cover the tick,
oldest first, weighted exp(-m i), i = 0 for the oldest, normalised.

Usage: history_ensemble_reference.py SPEC.json OUT.json
  SPEC: {"state": S, "depth": k, "hidden": H, "K": K, "D": D, "every": E, "latency": L, "m": m,
         "ticks": N, "observations": [[...S values...] per sample], "w1", "b1", "w2", "b2" (row-major)}
  OUT:  {"targets": [[D values or null] per tick], "queries": [origin ticks]}
"""
import json
import sys

import numpy as np


def main(spec_path, out_path):
    with open(spec_path) as f:
        spec = json.load(f)
    s, k, h = spec["state"], spec["depth"], spec["hidden"]
    K, D = spec["K"], spec["D"]
    every, latency, m, ticks = spec["every"], spec["latency"], spec["m"], spec["ticks"]
    obs = np.array(spec["observations"], dtype=np.float64)
    w1 = np.array(spec["w1"], dtype=np.float64).reshape(s * (k + 1), h)
    b1 = np.array(spec["b1"], dtype=np.float64)
    w2 = np.array(spec["w2"], dtype=np.float64).reshape(h, K * D)
    b2 = np.array(spec["b2"], dtype=np.float64)

    def policy(state, history):
        x = np.concatenate([state, history.reshape(-1)])
        return (np.tanh(x @ w1 + b1) @ w2 + b2).reshape(K, D)

    # the schedule: a query at every due tick; a result is collected before the tick's query is
    # made, so with every >= latency the policy is free again at every due tick
    assert every >= latency, "this reference models a policy that is free at every due tick"
    chunks = []
    for n in range(0, ticks, every):
        # the k previous samples, one period apart, oldest first; before the first sample, the first
        previous = obs[[max(0, n - k + i) for i in range(k)]]
        chunks.append((n, n + latency, policy(obs[n], previous)))

    targets = []
    for t in range(ticks):
        predictions = [a[t - o] for (o, arrival, a) in chunks if arrival <= t and o <= t < o + K]
        if not predictions:
            targets.append(None)
            continue
        w = np.exp(-m * np.arange(len(predictions)))
        p = np.array(predictions)
        targets.append(list((w[:, None] * p).sum(axis=0) / w.sum()))
    with open(out_path, "w") as f:
        json.dump({"targets": targets, "queries": [c[0] for c in chunks]}, f)


if __name__ == "__main__":
    main(sys.argv[1], sys.argv[2])
