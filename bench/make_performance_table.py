#!/usr/bin/env python3
"""Turns the JSON of bench_model_problem into the README's performance tables
and a log-log plot of solve time against unknowns.

    python3 bench/make_performance_table.py suite.json [--output-directory DIR]

Writes DIR/performance_table.md (the tables, in Markdown) and, when gnuplot is
installed, DIR/performance_time.png; prints the tables to standard output.
Python 3 standard library only.

Ratios are speed-ups: (best alternative's time at that n) / (this time), where
the alternatives are the loops nkit replaces (exact Newton, Picard, explicit
pseudo-time marching) that reached the criterion. Work units (WU) are solve
time / time of one residual evaluation, both measured in the same process.
Peak memory is the VmHWM (peak resident set) of the process that solved.
"""

import argparse
import json
import math
import os
import shutil
import subprocess
import sys
import tempfile

NAMES = {
    "newton_gmres_none": "nkit Newton-GMRES, no preconditioner",
    "newton_gmres_jacobi": "nkit Newton-GMRES + Jacobi",
    "newton_gmres_ilu_zero": "nkit Newton-GMRES + ILU(0), lagged",
    "newton_gmres_ilu_zero_recycling": "nkit Newton-GMRES + ILU(0), lagged, Krylov recycling (10 vectors)",
    "newton_gmres_modified_ilu_zero": "nkit Newton-GMRES + modified ILU(0), lagged",
    "newton_gmres_ilut": "nkit Newton-GMRES + ILUT, lagged",
    "newton_gmres_sparse_direct": "nkit Newton-GMRES + sparse LU of the exact Jacobian",
    "newton_gmres_algebraic_multigrid": "nkit Newton-GMRES + algebraic multigrid (BoomerAMG)",
    "newton_gmres_algebraic_multigrid_lagged": "nkit Newton-GMRES + algebraic multigrid (BoomerAMG), lagged",
    "newton_gmres_algebraic_multigrid_lagged_aggressive":
        "nkit Newton-GMRES + algebraic multigrid (BoomerAMG), lagged, aggressive coarsening",
    "newton_gmres_structured_multigrid_lagged":
        "nkit Newton-GMRES + structured multigrid (hypre PFMG), lagged",
    "newton_gmres_structured_multigrid_red_black_lagged":
        "nkit Newton-GMRES + structured multigrid (hypre PFMG), red/black Gauss-Seidel, non-Galerkin, lagged",
    "newton_gmres_grid_sequencing_modified_ilu_zero":
        "nkit grid sequencing, Newton-GMRES + modified ILU(0) per level, lagged",
    "newton_gmres_grid_sequencing_algebraic_multigrid_lagged_aggressive":
        "nkit grid sequencing, Newton-GMRES + algebraic multigrid (BoomerAMG) per level, lagged, aggressive coarsening",
    "newton_gmres_grid_sequencing_structured_multigrid_red_black_lagged":
        "nkit grid sequencing, Newton-GMRES + structured multigrid (hypre PFMG) per level, red/black, non-Galerkin, "
        "lagged",
    "newton_gmres_grid_sequencing_structured_multigrid_red_black_lagged_releasing_jacobian":
        "nkit grid sequencing, Newton-GMRES + structured multigrid (hypre PFMG) per level, red/black, non-Galerkin, "
        "lagged, Jacobian freed once copied",
    "exact_newton_sparse_lu": "exact Newton + Eigen SparseLU",
    "exact_newton_umfpack": "exact Newton + UMFPACK",
    "picard_sparse_lu": "Picard (frozen k) + Eigen SparseLU",
    "picard_ldlt": "Picard (frozen k) + Eigen SimplicialLDLT",
    "explicit_rk4": "explicit pseudo-time RK4 (Boost.Odeint)",
    "explicit_dopri5": "explicit pseudo-time Dormand-Prince (Boost.Odeint)",
}
MIB = 1024.0 * 1024.0


def is_nkit(configuration):
    return configuration.startswith("newton_gmres")


def load(path):
    with open(path) as handle:
        data = json.load(handle)
    runs = {}  # (configuration, n, threads) -> entry, the unit square
    runs_3d = {}  # the same for the unit cube
    kernels = []
    # With --benchmark_repetitions each name comes several times: keep the repetition with
    # the median time (the lower middle one for an even count), and skip Google
    # Benchmark's aggregate rows (mean, median, stddev, cv), whose counters are not figures.
    repeated = {}
    for entry in data.get("benchmarks", []):
        if entry.get("run_type") != "aggregate":
            repeated.setdefault(entry.get("name", ""), []).append(entry)
    chosen = {name: sorted(entries, key=lambda e: e.get("real_time", 0.0))[(len(entries) - 1) // 2]
              for name, entries in repeated.items()}
    for entry in data.get("benchmarks", []):
        name = entry.get("name", "")
        if entry.get("run_type") == "aggregate" or chosen.get(name) is not entry:
            continue
        if name.startswith("model_problem/") or name.startswith("model_problem_3d/"):
            parts = name.split("/")
            configuration, n = parts[1], int(parts[2])
            threads = int(parts[3].split(":")[1]) if len(parts) > 3 and parts[3].startswith("threads:") else 1
            (runs_3d if name.startswith("model_problem_3d/") else runs)[(configuration, n, threads)] = entry
        else:
            kernels.append(entry)
    return data, runs, runs_3d, kernels


def reached(entry):
    return entry is not None and not entry.get("error_occurred") and entry.get("reached", 0) > 0.5


def seconds(entry):
    return entry.get("solve_seconds", float("nan"))


def fit_power_law(points):
    """Least squares of ln y = ln c + p ln x; returns (p, c, r_squared) or None."""
    points = [(x, y) for x, y in points if x > 0 and y > 0]
    if len(points) < 2:
        return None
    xs = [math.log(x) for x, _ in points]
    ys = [math.log(y) for _, y in points]
    mean_x, mean_y = sum(xs) / len(xs), sum(ys) / len(ys)
    sxx = sum((x - mean_x) ** 2 for x in xs)
    if sxx == 0:
        return None
    slope = sum((x - mean_x) * (y - mean_y) for x, y in zip(xs, ys)) / sxx
    intercept = mean_y - slope * mean_x
    total = sum((y - mean_y) ** 2 for y in ys)
    residual = sum((y - intercept - slope * x) ** 2 for x, y in zip(xs, ys))
    return slope, math.exp(intercept), (1.0 - residual / total) if total > 0 else 1.0


def compact(value):
    if value is None or value != value:
        return "-"
    if value >= 1e6:
        return "%.2gM" % (value / 1e6)
    if value >= 1e4:
        return "%.0fk" % (value / 1e3)
    if value >= 1e3:
        return "%.1fk" % (value / 1e3)
    return "%.0f" % value


def time_text(value):
    return "%.3g s" % value if value < 100 else "%.0f s" % value


def build_tables(runs, kernels, threads=1, dimensions=2):
    configurations = []
    for configuration, _, t in sorted(runs):
        if t == threads and configuration not in configurations:
            configurations.append(configuration)
    configurations.sort(key=lambda c: (not is_nkit(c), list(NAMES).index(c) if c in NAMES else 99))
    sizes = sorted({n for (_, n, t) in runs if t == threads})
    # The alternatives run on one thread: speed-ups at every thread count are against them.
    best_alternative = {}
    for n in sizes:
        times = [seconds(entry) for (c, m, t), entry in runs.items()
                 if m == n and t == 1 and not is_nkit(c) and reached(entry)]
        best_alternative[n] = min(times) if times else None

    notes = []
    problem = "the model problem" if dimensions == 2 else "the 3-D model problem (unit cube, 7-point)"
    note_prefix = "" if dimensions == 2 else "3-D "
    lines = ["### Time to ||R|| <= 1e-8 ||R(T0)|| on %s (%s)" % (problem,
        "one core" if threads == 1 else "%d OpenMP threads for nkit's vector operations" % threads), "",
             "Cell: wall time, work units (WU = time / one residual evaluation), speed-up over the best "
             "alternative at that n (exact Newton, Picard or explicit marching, whichever was fastest).", "",
             "| configuration | " + " | ".join("n = %d (N = %s)" % (n, compact(n ** dimensions)) for n in sizes) +
             " |",
             "|---|" + "---|" * len(sizes)]
    for c in configurations:
        cells = []
        for n in sizes:
            entry = runs.get((c, n, threads))
            if entry is None:
                cells.append("")
            elif entry.get("error_occurred"):
                message = entry.get("error_message", "")
                if message.startswith("not built"):
                    cells.append("not built")
                else:
                    notes.append("%s, n = %d: %s" % (NAMES.get(c, c), n, message))
                    cells.append("not run [%s%d]" % (note_prefix, len(notes)))
            elif reached(entry):
                text = "%s, %s WU" % (time_text(seconds(entry)), compact(entry.get("work_units")))
                if best_alternative.get(n):
                    text += ", %.2g×" % (best_alternative[n] / seconds(entry))
                cells.append(text)
            else:
                text = "did not reach: %.1e after %s" % (entry.get("relative_residual", float("nan")),
                                                       time_text(seconds(entry)))
                if entry.get("projected_seconds", 0) > 0:
                    text += " (projected %s)" % time_text(entry["projected_seconds"])
                cells.append(text)
        lines.append("| %s | %s |" % (NAMES.get(c, c), " | ".join(cells)))
    lines += ["", "### Peak memory on %s (MiB, peak resident set of the solving process)" % problem, "",
              "| configuration | " + " | ".join("n = %d" % n for n in sizes) + " |", "|---|" + "---|" * len(sizes)]
    for c in configurations:
        cells = []
        for n in sizes:
            entry = runs.get((c, n, threads))
            cells.append("%.0f" % (entry["peak_rss_bytes"] / MIB) if entry and "peak_rss_bytes" in entry else "")
        lines.append("| %s | %s |" % (NAMES.get(c, c), " | ".join(cells)))
    lines += ["", "### Iterations on %s (Newton or Picard steps / linear iterations; time steps for explicit "
              "marching)" % problem, "",
              "| configuration | " + " | ".join("n = %d" % n for n in sizes) + " |", "|---|" + "---|" * len(sizes)]
    for c in configurations:
        cells = []
        for n in sizes:
            entry = runs.get((c, n, threads))
            if entry is None or "steps" not in entry:
                cells.append("")
            elif "linear_iterations" in entry:
                cells.append("%d / %d" % (entry["steps"], entry["linear_iterations"]))
            else:
                cells.append("%d" % entry["steps"])
        lines.append("| %s | %s |" % (NAMES.get(c, c), " | ".join(cells)))
    if notes:
        lines += [""] + ["[%s%d] %s" % (note_prefix, k + 1, note) for k, note in enumerate(notes)]
    return configurations, sizes, lines


def kernel_lines(kernels):
    lines = ["", "### Kernels", ""]
    triad = {}
    for entry in kernels:
        name = entry["name"]
        if name.startswith("stream_triad/"):
            fields = dict(part.split(":") for part in name.split("/")[1:] if ":" in part)
            triad[(int(fields["length"]), int(fields["threads"]))] = entry.get("bytes_per_second", 0.0)
    if triad:
        length = max(length for length, _ in triad)
        for (l, t), rate in sorted(triad.items()):
            if l == length:
                lines.append("- STREAM-style triad, %d entries per array, %d thread(s): %.1f GB/s" % (l, t, rate / 1e9))
    for entry in kernels:
        name = entry["name"]
        if name.startswith("residual_evaluation/"):
            line = "- one residual evaluation at n = %s: %.3g ms (the work unit)" % (
                name.split("/")[1], entry["real_time"] if entry.get("time_unit") == "ms" else float("nan"))
            if "fraction_of_arithmetic_peak" in entry:
                line += "; %.1f flops per cell, %.0f %% of the arithmetic peak" % (
                    entry["flops_per_cell"], 100.0 * entry["fraction_of_arithmetic_peak"])
            if "least_fraction_of_triad" in entry:
                line += "; least traffic (16 bytes per cell) %.0f %% of the triad" % (
                    100.0 * entry["least_fraction_of_triad"])
            lines.append(line)
        elif name == "arithmetic_peak" and "flops_per_second" in entry:
            lines.append("- arithmetic peak as built (one core, independent multiply-add chains): %.1f GFLOP/s" %
                         (entry["flops_per_second"] / 1e9))
        elif name.startswith("orthogonalization/"):
            fields = dict(part.split(":") for part in name.split("/")[1:] if ":" in part)
            lines.append("- GMRES(30) orthogonalisation, %s² unknowns, %s thread(s), reorthogonalisation %s: "
                         "%.1f GB/s nominal = %.0f %% of the triad; basis traffic only %.0f %%" % (
                             fields["n"], fields["threads"],
                             "when needed (default)" if fields["default_reorthogonalization"] == "1" else "off",
                             entry.get("orthogonalization_bytes_per_second", 0) / 1e9,
                             100 * entry.get("fraction_of_triad", float("nan")),
                             100 * entry.get("basis_fraction_of_triad", float("nan"))))
        elif name.endswith("_BigO") or name.endswith("_RMS"):
            if name.endswith("_RMS"):
                lines.append("- %s: time per unknown fit RMS %.0f %%" % (name[:-4], 100 * entry.get("rms", 0)))
        elif name.startswith("broyden_tridiagonal"):
            lines.append("- %s: %.0f ns per unknown (%d Newton steps, %d linear iterations)" % (
                name, 1e9 * entry.get("seconds_per_unknown", 0), entry.get("newton_steps", 0),
                entry.get("linear_iterations", 0)))
        elif name.startswith("trace_overhead"):
            lines.append("- tracing: recording costs %.3f×, detached %.3f× of a solve that never had a recorder" % (
                entry.get("recording_over_none", float("nan")), entry.get("detached_over_none", float("nan"))))
    return lines


def target_lines(runs, kernels, configurations):
    lines = ["", "### Targets of the first suite (measured; n = 1024 unless stated)", ""]
    nkit_reached = lambda n: [(seconds(runs[(c, n, 1)]), c) for c in configurations
                              if is_nkit(c) and reached(runs.get((c, n, 1)))]
    candidates = nkit_reached(1024)
    if not candidates:
        lines.append("- no nkit configuration reached the criterion at n = 1024: targets not assessable")
        return lines
    best_seconds, best = min(candidates)
    entry = runs[(best, 1024, 1)]
    lines.append("- best nkit configuration: %s" % NAMES.get(best, best))
    work_units = entry.get("work_units", float("nan"))
    lines.append("- work units <= 5,000: %s WU (%s)" % (compact(work_units), "met" if work_units <= 5000 else "not met"))
    for other, wanted in (("exact_newton_sparse_lu", 10), ("picard_ldlt", 10)):
        alternative = runs.get((other, 1024, 1))
        if reached(alternative):
            ratio = seconds(alternative) / best_seconds
            lines.append("- >= %d× faster than %s: %.1f× (%s)" % (wanted, NAMES[other], ratio,
                                                                 "met" if ratio >= wanted else "not met"))
        else:
            lines.append("- >= %d× faster than %s: not measured at n = 1024" % (wanted, NAMES[other]))
    # The targets name SparseLU and LDLT; the fastest alternative that reached
    # the criterion at n = 1024 (e.g. UMFPACK) is the stricter comparison.
    alternatives = [(seconds(runs[(c, 1024, 1)]), c) for c in configurations
                    if not is_nkit(c) and reached(runs.get((c, 1024, 1)))]
    if alternatives:
        fastest_seconds, fastest = min(alternatives)
        lines.append("- against the fastest alternative at n = 1024 (%s): %.1f× faster" % (
            NAMES.get(fastest, fastest), fastest_seconds / best_seconds))
    # Explicit marching, extrapolated in work units from the sizes it finished.
    for other in ("explicit_rk4", "explicit_dopri5"):
        finished = [(n * n, runs[(other, n, 1)]["work_units"]) for (c, n, t) in runs
                    if c == other and t == 1 and reached(runs[(c, n, t)])]
        if not finished:
            continue
        fit = fit_power_law(finished)
        if fit:
            exponent, coefficient, _ = fit
            basis = "fitted WU ∝ N^%.2f on %d sizes" % (exponent, len(finished))
        else:
            # One size: the march needs a number of steps ∝ λmax/λmin ∝ n² = N
            # (stiffness ratio of the diffusion operator): WU ∝ N.
            exponent, coefficient = 1.0, finished[0][1] / finished[0][0]
            basis = "one size finished; WU ∝ N from the stiffness ratio"
        projected = coefficient * (1024.0 * 1024.0) ** exponent
        ratio = projected / work_units
        lines.append("- >= 100× faster than %s: %.0f× (extrapolated to n = 1024: %s WU; %s) (%s)" % (
            NAMES[other], ratio, compact(projected), basis, "met" if ratio >= 100 else "not met"))
    sizes = [n for n in (256, 512, 1024, 2048) if reached(runs.get((best, n, 1)))]
    fit = fit_power_law([(n * n, seconds(runs[(best, n, 1)])) for n in sizes])
    if fit:
        verdict = "met" if fit[0] <= 1.15 else "not met"
        if 2048 not in sizes:
            verdict += "; n = 2048 not measured"
        lines.append("- time growth <= N^1.15 from n = 256 to 2048: N^%.2f on n = %s (R² %.3f) (%s)" % (
            fit[0], ", ".join(str(n) for n in sizes), fit[2], verdict))
    exact = runs.get(("exact_newton_sparse_lu", 1024, 1))
    if exact and "peak_rss_bytes" in exact and "peak_rss_bytes" in entry:
        share = entry["peak_rss_bytes"] / exact["peak_rss_bytes"]
        lines.append("- peak memory <= 25 %% of exact Newton + SparseLU: %.0f %% (%.0f vs %.0f MiB) (%s)" % (
            100 * share, entry["peak_rss_bytes"] / MIB, exact["peak_rss_bytes"] / MIB,
            "met" if share <= 0.25 else "not met"))
    for entry in kernels:
        name = entry["name"]
        for n in ("1024", "2048"):
            if name.startswith("orthogonalization/n:%s/threads:1/default_reorthogonalization:0" % n):
                fraction = entry.get("fraction_of_triad", float("nan"))
                basis = entry.get("basis_fraction_of_triad", float("nan"))
                lines.append("- orthogonalisation >= 70 %% of triad bandwidth at n = %s: %.0f %% by the nominal "
                             "byte count (%s); %.0f %% counting only the basis traffic, the lower bound while w "
                             "stays in cache (%s)" % (n, 100 * fraction, "met" if fraction >= 0.7 else "not met",
                                                      100 * basis, "met" if basis >= 0.7 else "not met"))
    return lines


def limit_target_lines(runs, runs_3d):
    """The targets of the structured-grid work (multigrid, grid sequencing, recycling, 3-D)."""
    lines = ["", "### Targets toward textbook multigrid efficiency (one core; measured in this run)", ""]
    candidates = [(seconds(runs[(c, 1024, 1)]), c) for (c, n, t) in runs
                  if n == 1024 and t == 1 and is_nkit(c) and reached(runs[(c, n, t)])]
    if not candidates:
        return lines + ["- no nkit configuration reached the criterion at n = 1024: targets not assessable"]
    best_seconds, best = min(candidates)
    lines.append("- fastest nkit configuration at n = 1024: %s" % NAMES.get(best, best))
    at = {n: runs.get((best, n, 1)) for n in (256, 512, 1024, 2048)}
    sizes = [n for n in (1024, 2048) if reached(at[n])]
    if sizes:
        suite = [at[n].get("work_units", float("nan")) for n in sizes]
        solver = [at[n].get("solver_work_units", float("nan")) for n in sizes]
        lines.append("- <= 300 WU at n = 1024 and 2048: %s WU by the suite's residual timing, %s by the solver's own "
                     "count (%s)%s" % (
                         " / ".join(compact(w) for w in suite), " / ".join(compact(w) for w in solver),
                         "met" if max(solver) <= 300 and len(sizes) == 2 else "not met",
                         "" if len(sizes) == 2 else "; n = 2048 not reached"))
    exact = runs.get(("exact_newton_sparse_lu", 1024, 1))
    if reached(exact):
        ratio = seconds(exact) / best_seconds
        lines.append("- >= 60× faster than exact Newton + Eigen SparseLU at n = 1024: %.1f× (%.3g s / %.3g s) (%s)" % (
            ratio, seconds(exact), best_seconds, "met" if ratio >= 60 else "not met"))
    earlier = runs.get(("newton_gmres_algebraic_multigrid_lagged_aggressive", 2048, 1))
    if reached(earlier) and reached(at[2048]):
        share = seconds(at[2048]) / seconds(earlier)
        lines.append("- n = 2048 in under a quarter of the earlier best configuration's time (%s): %.3g s against "
                     "%.3g s, %.2f (%s)" % (NAMES["newton_gmres_algebraic_multigrid_lagged_aggressive"],
                                           seconds(at[2048]), seconds(earlier), share,
                                           "met" if share < 0.25 else "not met"))
    grown = [n for n in (256, 512, 1024, 2048) if reached(at[n])]
    fit = fit_power_law([(n * n, seconds(at[n])) for n in grown])
    if fit and 2048 in grown and 1024 in grown:
        top = math.log(seconds(at[2048]) / seconds(at[1024])) / math.log(4.0)
        lines.append("- time ∝ N^<=1.05 from n = 256 to 2048, including the top step: N^%.2f fitted on n = %s "
                     "(R² %.3f); top step 1024 -> 2048 N^%.2f (%s)" % (
                         fit[0], ", ".join(str(n) for n in grown), fit[2], top,
                         "met" if fit[0] <= 1.05 and top <= 1.05 else "not met"))
    if reached(exact) and "peak_rss_bytes" in exact:
        shares = sorted((runs[(c, 1024, 1)]["peak_rss_bytes"] / exact["peak_rss_bytes"], c) for (c, n, t) in runs
                        if n == 1024 and t == 1 and is_nkit(c) and reached(runs[(c, n, t)]) and
                        "peak_rss_bytes" in runs[(c, n, t)])
        if shares:
            share, smallest = shares[0]
            lines.append("- peak memory <= 15 %% of exact Newton + SparseLU at n = 1024: %.1f %% with %s (%.0f against "
                         "%.0f MiB); the fastest configuration %.1f %% (%s)" % (
                             100 * share, NAMES.get(smallest, smallest),
                             runs[(smallest, 1024, 1)]["peak_rss_bytes"] / MIB, exact["peak_rss_bytes"] / MIB,
                             100 * at[1024]["peak_rss_bytes"] / exact["peak_rss_bytes"],
                             "met" if share <= 0.15 else "not met"))
    largest = max([n for (c, n, t) in runs_3d if t == 1 and is_nkit(c) and reached(runs_3d[(c, n, t)])], default=None)
    if largest is not None:
        time_3d, best_3d = min((seconds(runs_3d[(c, largest, 1)]), c) for (c, n, t) in runs_3d
                               if n == largest and t == 1 and is_nkit(c) and reached(runs_3d[(c, n, t)]))
        entry_3d = runs_3d[(best_3d, largest, 1)]
        text = "- 3-D n = %d (%s unknowns): %s, %.3g s, %.2f GiB peak" % (
            largest, compact(largest ** 3), NAMES.get(best_3d, best_3d), time_3d,
            entry_3d.get("peak_rss_bytes", float("nan")) / (1024.0 * MIB))
        finished_2048 = [seconds(runs[(c, 2048, 1)]) for (c, n, t) in runs
                         if n == 2048 and t == 1 and is_nkit(c) and reached(runs[(c, n, t)])]
        if finished_2048:
            per_unknown_3d = time_3d / largest ** 3
            per_unknown_2d = min(finished_2048) / 2048.0 ** 2
            ratio = per_unknown_3d / per_unknown_2d
            text += "; %.2f µs per unknown against %.2f µs at 2-D n = 2048, %.2f×" % (
                1e6 * per_unknown_3d, 1e6 * per_unknown_2d, ratio)
            if largest == 256:
                text += " (target within 12 GiB and 2×: %s)" % (
                    "met" if ratio <= 2 and entry_3d.get("peak_rss_bytes", float("inf")) <= 12 * 1024.0 * MIB
                    else "not met")
        lines.append(text)
    for n in sorted({n for (c, n, t) in runs if c == "newton_gmres_ilu_zero_recycling" and t == 1}):
        plain, recycled = runs.get(("newton_gmres_ilu_zero", n, 1)), runs.get(("newton_gmres_ilu_zero_recycling", n, 1))
        if reached(plain) and reached(recycled):
            lines.append("- Krylov recycling on the Newton sequence at n = %d (ILU(0), lagged): %d against %d GMRES "
                         "iterations (%.0f %% fewer), %.3g s against %.3g s" % (
                             n, recycled["linear_iterations"], plain["linear_iterations"],
                             100 * (1 - recycled["linear_iterations"] / plain["linear_iterations"]),
                             seconds(recycled), seconds(plain)))
    lines.append("- not measured by this suite: recycling on a time-stepping sequence (bench_krylov_recycling) and "
                 "two MPI ranks against one (bench_distributed)")
    return lines


def plot(runs, configurations, output_directory):
    if shutil.which("gnuplot") is None:
        return "gnuplot not found: plot column N against seconds of the table on log-log axes by hand."
    png = os.path.join(output_directory, "performance_time.png")
    with tempfile.TemporaryDirectory() as work:
        commands = ["set terminal pngcairo size 1000,800", "set output '%s'" % png, "set logscale xy",
                    "set key outside below", "set xlabel 'unknowns N'",
                    "set format x '10^{%L}'", "set format y '10^{%L}'", "set ylabel 'seconds to 1e-8 reduction'",
                    "set title 'Heat-conduction model problem (k = 1 + T^2, q = 10, unit square), one core'", "set grid"]
        series = []
        for k, c in enumerate(configurations):
            points = sorted((n * n, seconds(runs[(c, n, 1)])) for (cc, n, t) in runs
                            if cc == c and t == 1 and reached(runs[(cc, n, t)]))
            if not points:
                continue
            path = os.path.join(work, "series%d.dat" % k)
            with open(path, "w") as handle:
                handle.writelines("%d %.9g\n" % point for point in points)
            style = "linespoints lw 2" if is_nkit(c) else "linespoints dt 2"
            series.append("'%s' using 1:2 with %s title '%s'" % (path, style, NAMES.get(c, c).replace("'", "")))
        if not series:
            return "no configuration reached the criterion: no plot."
        commands.append("plot " + ", ".join(series))
        script = os.path.join(work, "plot.gp")
        with open(script, "w") as handle:
            handle.write("\n".join(commands) + "\n")
        subprocess.run(["gnuplot", script], check=True)
    return "wrote %s" % png


def main():
    parser = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    parser.add_argument("json", help="output of bench_model_problem --benchmark_out=<file> --benchmark_out_format=json")
    parser.add_argument("--output-directory", default=".", help="where to write performance_table.md and the PNG")
    arguments = parser.parse_args()
    data, runs, runs_3d, kernels = load(arguments.json)
    if not runs:
        sys.exit("no model_problem/ results in %s" % arguments.json)
    configurations, _, lines = build_tables(runs, kernels)
    context = data.get("context", {})
    header = ["<!-- generated by bench/make_performance_table.py from %s -->" % os.path.basename(arguments.json),
              "Measured %s on %d CPU(s) (%s); time cap %s s per solve; load average at the start %s%s." % (
                  context.get("date", "?"), context.get("num_cpus", 0), context.get("host_name", "?"),
                  context.get("nkit_time_cap_seconds", "?"),
                  ", ".join("%.1f" % value for value in context.get("load_avg", [])) or "?",
                  " (a busy machine: timings are rough, and OpenMP rows mostly measure waiting for a core)"
                  if context.get("load_avg") and context["load_avg"][0] > 0.5 * context.get("num_cpus", 1) else ""),
              ""]
    if context.get("rows_from_second_run"):
        header.insert(2, "Rows from a second run of the same suite: %s." % context["rows_from_second_run"])
    if context.get("kernel_run"):
        header.insert(2, "Kernel figures (residual evaluation, triad, orthogonalisation, Broyden, tracing) come from a "
                      "second run of the same binary at %s, with the --benchmark_filter of the kernels, on an "
                      "otherwise idle machine (merged into this JSON under context.kernel_run)." % context["kernel_run"])
    lines = (header + lines + kernel_lines(kernels) + target_lines(runs, kernels, configurations) +
             limit_target_lines(runs, runs_3d))
    threads = sorted({t for (_, _, t) in runs})
    if len(threads) > 1:
        for t in threads[1:]:
            lines += [""] + build_tables(runs, kernels, t)[2]
    for t in sorted({t for (_, _, t) in runs_3d}):
        lines += [""] + build_tables(runs_3d, kernels, t, dimensions=3)[2]
    os.makedirs(arguments.output_directory, exist_ok=True)
    table_path = os.path.join(arguments.output_directory, "performance_table.md")
    with open(table_path, "w") as handle:
        handle.write("\n".join(lines) + "\n")
    print("\n".join(lines))
    print("\nwrote %s; %s" % (table_path, plot(runs, configurations, arguments.output_directory)))


if __name__ == "__main__":
    main()
