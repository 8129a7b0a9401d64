#!/usr/bin/env python3
"""Tables of bench_radiation_diffusion results at equal accuracy.

For each configuration and grid size the benchmark ran a ladder of fixed step
counts and measured the final error against the reference. Here, for a target
error (--target_error), each configuration's step count and time at that error
are found by log-log interpolation between the two rungs that bracket it:
  * all rungs less accurate than the target: extrapolated from the two finest
    rungs with their measured order (marked "extrapolated");
  * all rungs more accurate than the target (the coupled solve, whose Newton
    iteration limits how long a step can be): the coarsest rung, which is more
    accurate than needed, so its time is an upper bound (marked "coarsest rung");
  * one rung only: used as it is when it meets the target, else marked "not reached".
Time is CPU time (the machine is shared); wall time is shown beside it.

  python3 bench/make_radiation_table.py radiation.json [--target_error=0.02]
"""
import argparse
import json
import math
import re
from collections import defaultdict


def load(path):
    with open(path) as f:
        data = json.load(f)
    runs = defaultdict(list)
    for b in data["benchmarks"]:
        m = re.match(r"radiation_2d/(\w+)/steps:(\d+)/(\d+)", b["name"])
        if not m or b.get("reached", 1) != 1 or b.get("final_error", -1) <= 0:
            continue
        runs[(m.group(1), int(m.group(3)))].append(b)
    for key in runs:
        runs[key].sort(key=lambda b: b["steps"])
    return runs, data.get("context", {})


def at_target(rungs, target):
    """(steps, cpu, wall, note) at the target error."""
    pts = [(r["steps"], r["final_error"], r["cpu_seconds"], r["wall_seconds"]) for r in rungs]
    if all(e <= target for _, e, _, _ in pts):
        s, e, c, w = pts[0]
        return s, c, w, "coarsest rung (error %.2g)" % e
    if len(pts) == 1:
        return None, None, None, "not reached (one rung, error %.2g)" % pts[0][1]
    pair = None
    for a, b in zip(pts, pts[1:]):
        if a[1] >= target >= b[1]:
            pair, note = (a, b), "interpolated"
            break
    if pair is None:
        pair, note = (pts[-2], pts[-1]), "extrapolated"
    (s0, e0, c0, w0), (s1, e1, c1, w1) = pair
    slope = math.log(e1 / e0) / math.log(s1 / s0)  # error ~ steps^slope
    steps = s0 * (target / e0) ** (1.0 / slope)
    scale = lambda y0, y1: y0 * (y1 / y0) ** (math.log(steps / s0) / math.log(s1 / s0))
    return steps, scale(c0, c1), scale(w0, w1), "%s, order %.2f" % (note, -slope)


def main():
    parser = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    parser.add_argument("results", nargs="+")
    parser.add_argument("--target_error", type=float, default=0.02)
    parser.add_argument("--span", type=float, default=0.28, help="end time minus start time of the runs")
    args = parser.parse_args()
    runs = {}
    for path in args.results:
        r, _ = load(path)
        runs.update(r)
    sizes = sorted({n for _, n in runs})
    names = []
    for name, _ in runs:
        if name not in names:
            names.append(name)
    print("## Every run\n")
    print("| configuration | n | steps | Δt | final error | Newton steps | GMRES per Newton step | passes per step | CPU s | wall s |")
    print("|---|---|---|---|---|---|---|---|---|---|")
    for name in names:
        for n in sizes:
            for r in runs.get((name, n), []):
                print("| %s | %d | %d | %.3g | %.3g | %d | %.2f | %.2f | %.3g | %.3g |" % (
                    name, n, r["steps"], r["step_size"], r["final_error"], r["newton_steps"], r["gmres_per_newton"],
                    r["passes"], r["cpu_seconds"], r["wall_seconds"]))
    print("\n## At equal accuracy: final error %.3g\n" % args.target_error)
    print("| configuration | n | steps | Δt | CPU s | wall s | Δt ÷ split_lagged Δt | split_lagged CPU ÷ this CPU | how |")
    print("|---|---|---|---|---|---|---|---|---|")
    for n in sizes:
        base = at_target(runs[("split_lagged", n)], args.target_error) if ("split_lagged", n) in runs else None
        for name in names:
            if (name, n) not in runs:
                continue
            steps, cpu, wall, note = at_target(runs[(name, n)], args.target_error)
            if steps is None:
                print("| %s | %d | – | – | – | – | – | – | %s |" % (name, n, note))
                continue
            dt_ratio = base[0] / steps if base and base[0] else float("nan")
            time_ratio = base[1] / cpu if base and base[1] else float("nan")
            print("| %s | %d | %.0f | %.3g | %.3g | %.3g | %.1f | %.1f | %s |" % (
                name, n, steps, args.span / steps, cpu, wall, dt_ratio, time_ratio, note))
    if len(sizes) >= 2:
        print("\n## GMRES iterations per Newton step, %d² → %d²\n" % (sizes[0], sizes[-1]))
        print("| configuration | steps | %d² | %d² | growth |" % (sizes[0], sizes[-1]))
        print("|---|---|---|---|---|")
        for name in names:
            small = {r["steps"]: r for r in runs.get((name, sizes[0]), [])}
            large = {r["steps"]: r for r in runs.get((name, sizes[-1]), [])}
            for steps in sorted(set(small) & set(large)):
                a, b = small[steps]["gmres_per_newton"], large[steps]["gmres_per_newton"]
                print("| %s | %d | %.2f | %.2f | %.2f× |" % (name, steps, a, b, b / a))


if __name__ == "__main__":
    main()
