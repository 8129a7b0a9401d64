#!/usr/bin/env python3
"""Turns the JSON of bench_time_integration into the README's table and targets (Markdown on stdout).

    bench_time_integration --benchmark_out=time.json --benchmark_out_format=json
    python3 bench/make_time_integration_table.py time.json

All times are process CPU seconds (the counter cpu_seconds); a configuration capped before the horizon is
shown with its projected time (CPU time x horizon / time reached), marked "projected".
"""
import json
import sys

LABELS = {
    "nkit_adaptive/bdf2_ilu0_lagged": "nkit BDF2, ILU(0) lagged",
    "nkit_adaptive/tr_bdf2_ilu0_lagged": "nkit TR-BDF2, ILU(0) lagged",
    "nkit_adaptive_multigrid/bdf2_amg_lagged": "nkit BDF2, BoomerAMG lagged",
    "nkit_adaptive_multigrid/tr_bdf2_amg_lagged": "nkit TR-BDF2, BoomerAMG lagged",
    "backward_euler_picard/fixed_steps": "backward Euler (400 fixed steps) + Picard, sparse LDLT",
    "explicit_dormand_prince": "Boost.Odeint runge_kutta_dopri5 (explicit, adaptive)",
    "implicit_rosenbrock4": "Boost.Odeint rosenbrock4 (dense Jacobian)",
}


def main(path):
    with open(path) as f:
        runs = json.load(f)["benchmarks"]
    table = {}
    sizes = set()
    for run in runs:
        name = run["name"].replace("/iterations:1", "")
        config, size = name.rsplit("/", 1)
        size = int(size)
        sizes.add(size)
        reached = run.get("reached", 1.0) == 1.0
        seconds = run["cpu_seconds"] if reached else run.get("projected_seconds", float("nan"))
        table[(config, size)] = dict(run, seconds=seconds, reached_horizon=reached)
    sizes = sorted(sizes)
    print("| configuration | " + " | ".join(f"n = {n}: CPU s (steps, error)" for n in sizes) + " |")
    print("|---|" + "---|" * len(sizes))
    for config, label in LABELS.items():
        cells = []
        for n in sizes:
            r = table.get((config, n))
            if r is None:
                cells.append("")
                continue
            text = f"{r['seconds']:.3g}"
            if not r["reached_horizon"]:
                text += f" projected (capped after {int(r['steps'])} steps)"
            else:
                text += f" ({int(r['steps'])}, {r['final_error']:.1e})"
            cells.append(text)
        print(f"| {label} | " + " | ".join(cells) + " |")
    print()
    nkit = [c for c in LABELS if c.startswith("nkit")]
    for n in sizes:
        present = [c for c in nkit if (c, n) in table]
        if not present:
            continue
        best = min(present, key=lambda c: table[(c, n)]["seconds"])
        b = table[(best, n)]
        line = f"- n = {n}: best nkit configuration {LABELS[best]} ({b['seconds']:.3g} s CPU)"
        for other in ("explicit_dormand_prince", "backward_euler_picard/fixed_steps", "implicit_rosenbrock4"):
            if (other, n) in table:
                o = table[(other, n)]
                mark = "" if o["reached_horizon"] else " (projected)"
                line += f"; {o['seconds'] / b['seconds']:.1f}x faster than {LABELS[other]}{mark}"
        print(line)
    for c in nkit:
        setups = [f"n = {n}: {table[(c, n)]['setups_per_step']:.2f}" for n in sizes if (c, n) in table]
        print(f"- preconditioner setups per step, {LABELS[c]}: " + ", ".join(setups))
        if (c, 256) in table and (c, 512) in table:
            ratio = table[(c, 512)]["work_units_per_step"] / table[(c, 256)]["work_units_per_step"]
            print(f"  work units per step 256 -> 512: {table[(c, 256)]['work_units_per_step']:.0f} -> "
                  f"{table[(c, 512)]['work_units_per_step']:.0f} ({ratio:.2f}x)")


if __name__ == "__main__":
    main(sys.argv[1])
