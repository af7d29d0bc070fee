#!/usr/bin/env python3
"""Checks the planning engine's shape: no file much over 600 lines and no
import circles between its modules (files). Run by .ci/run.

A module's dependencies are the `crate::engine::...` paths it names. Child
test modules (`tests.rs`) are ignored: they may reach anywhere.
"""
import pathlib, re, sys

ROOT = pathlib.Path(__file__).resolve().parent.parent / "src" / "engine"
MAX_LINES = 650  # "much over 600"


def module_of(path: pathlib.Path) -> str:
    rel = path.relative_to(ROOT).with_suffix("")
    parts = list(rel.parts)
    if parts[-1] == "mod":
        parts = parts[:-1]
    return "::".join(parts) or "engine"


every_file = sorted(ROOT.rglob("*.rs"))
files = [p for p in every_file if p.name != "tests.rs"]
modules = {module_of(p): p for p in files}
edges = {m: set() for m in modules}
for m, p in modules.items():
    text = p.read_text()
    # strip #[cfg(test)] mod tests { ... } blocks at the end of files
    cut = text.find("#[cfg(test)]")
    if cut >= 0:
        text = text[:cut]
    # doc links are not imports
    text = "\n".join(l for l in text.splitlines() if not l.lstrip().startswith("//"))
    for hit in re.finditer(r"crate::engine::([a-z_:]+)", text):
        path = hit.group(1).split("::")
        # longest known module prefix
        for n in range(len(path), 0, -1):
            cand = "::".join(path[:n])
            if cand in modules:
                if cand != m and not m.startswith(cand + "::") and cand != "engine":
                    # a parent's mod.rs re-exporting children is not a dependency of the child
                    edges[m].add(cand)
                break

problems = []
for p in every_file:
    n = sum(1 for _ in p.open())
    if n > MAX_LINES:
        problems.append(f"{p.relative_to(ROOT.parent.parent)}: {n} lines (limit {MAX_LINES})")

# cycle search (DFS)
state, stack = {}, []
def visit(m):
    state[m] = 1
    stack.append(m)
    for d in sorted(edges[m]):
        if m.startswith(d + "::") or d.startswith(m + "::"):
            continue  # parent/child (mod.rs tours) are not cycles
        if state.get(d) == 1:
            cyc = stack[stack.index(d):] + [d]
            problems.append("import circle: " + " -> ".join(cyc))
        elif d not in state:
            visit(d)
    stack.pop()
    state[m] = 2
for m in sorted(modules):
    if m not in state:
        visit(m)

if problems:
    print("\n".join(problems))
    sys.exit(1)
print(f"engine shape ok: {len(files)} files, none over {MAX_LINES} lines, no import circles")
