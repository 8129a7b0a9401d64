#!/usr/bin/env python3
"""Checks the shape of include/nkit/ (run by ctest as `include_layers`).

1. Layers: a header may include nkit headers only from its own folder or from
   folders earlier in LAYERS (lower layers never include higher ones).
2. No include cycles between headers.
3. Every header opens with a `/// \\file` comment that says its one concept,
   and has at most MAX_LINES lines.
Top-level headers (nkit.hpp, version.hpp) and the forwarding headers kept for
old include paths may include anything.
Exit status 0 when every rule holds; otherwise one line per violation.
"""
import os
import re
import sys

LAYERS = ["detail", "core", "fields", "grids", "distributed", "report", "krylov", "jacobian", "preconditioners",
          "globalization", "newton", "multilevel", "continuation", "time", "fixed_point", "sensitivity"]
MAX_LINES = 600
INCLUDE = re.compile(r'^\s*#\s*include\s+"([^"]+)"', re.MULTILINE)


def main(root):
    root = os.path.abspath(root)
    headers = {}
    for folder, _, files in os.walk(root):
        for name in files:
            if name.endswith(".hpp"):
                path = os.path.relpath(os.path.join(folder, name), root)
                with open(os.path.join(root, path), encoding="utf-8") as stream:
                    headers[path] = stream.read()
    problems = []
    graph = {}
    for path, text in sorted(headers.items()):
        folder = os.path.dirname(path)
        targets = []
        for included in INCLUDE.findall(text):
            target = os.path.normpath(os.path.join(folder, included))
            if target not in headers:
                problems.append(f"{path}: includes \"{included}\", which is not an nkit header")
                continue
            targets.append(target)
            if folder == "":
                continue  # umbrella, version and forwarding headers
            target_folder = os.path.dirname(target)
            if folder not in LAYERS:
                problems.append(f"{path}: folder '{folder}' is not in the layer list of {sys.argv[0]}")
            elif target_folder == "" or target_folder not in LAYERS:
                problems.append(f"{path}: includes the top-level header {target}")
            elif LAYERS.index(target_folder) > LAYERS.index(folder):
                problems.append(f"{path}: layer '{folder}' includes the higher layer '{target_folder}' ({target})")
        graph[path] = targets
        lines = text.count("\n")
        if lines > MAX_LINES:
            problems.append(f"{path}: {lines} lines (limit {MAX_LINES}: one concept per header)")
        if not re.search(r"^/// \\file ", text, re.MULTILINE):
            problems.append(f"{path}: no '/// \\file' comment stating the header's concept")
    # Cycles: depth-first search with colours.
    state = {}

    def visit(node, stack):
        state[node] = "open"
        stack.append(node)
        for target in graph.get(node, []):
            if state.get(target) == "open":
                cycle = stack[stack.index(target):] + [target]
                problems.append("include cycle: " + " -> ".join(cycle))
            elif target not in state:
                visit(target, stack)
        stack.pop()
        state[node] = "done"

    for node in sorted(graph):
        if node not in state:
            visit(node, [])
    for line in problems:
        print(line)
    print(f"checked {len(headers)} headers in {root}: {len(problems)} problem(s)")
    return 1 if problems else 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1] if len(sys.argv) > 1 else os.path.join(os.path.dirname(__file__), "..", "include", "nkit")))
