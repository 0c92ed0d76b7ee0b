"""Cost of the unsymmetric cases: the sample with its rolling cases (23.349 with the 23.455
aileron deflections at V_A, V_C, V_D, both senses, steady roll and the initial state) and 3 flaps-down cases
(23.345) added, against the same sample with symmetric cases only; both `run --no-render`.

Figure (target on the 2-core reference machine): t(with unsymmetric) / t(symmetric) <= 1.5.
The 9 added cases (more than the 4 + 4 of the target's statement) need the full-span lattice
with the control surfaces, factorised once per Mach bin of their speeds. Neither file has a
tail (the pitch trim doubles every case, forward and aft c.g., in both runs alike). The floor
is the symmetric run measured in the same rounds. Best of the interleaved repeats (wall).
Run: python benchmarks/bench_unsymmetric.py
"""

from __future__ import annotations

import os
import sys
import tempfile

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))

import _bench_util as u  # noqa: E402

TARGET_RATIO = 1.5
SECTIONS = ("[[control_surface]]", "[rolling]", "[flaps]", "[tail]", "[cg]")


def _strip(text: str, keep=()) -> str:
    """The case text without the control sections (except those in keep)."""
    i, j = text.index("[[control_surface]]"), text.index("[[load_case]]")
    block = text[i:j]
    parts, cur = [], None
    for line in block.splitlines(keepends=True):
        head = line.split("#")[0].strip()
        if head in SECTIONS:
            cur = [head, line]
            parts.append(cur)
        elif cur is not None:
            cur[1] += line
    kept = "".join(p[1] for p in parts if p[0] in keep)
    return text[:i] + kept + text[j:]


def main() -> dict:
    """Run the benchmark; returns {figure: (target, measured, measured / target, floor)}."""
    print(u.machine_line())
    full = u.case_text()
    with tempfile.TemporaryDirectory() as d:
        sym = os.path.join(d, "symmetric.toml")
        uns = os.path.join(d, "unsymmetric.toml")
        open(sym, "w").write(_strip(full))
        text = _strip(full, keep=("[[control_surface]]", "[rolling]", "[flaps]"))
        open(uns, "w").write(text.replace('methods = ["simplified", "lattice"]',
                                          'methods = ["lattice"]'))
        out = os.path.join(d, "out")
        cmds = {n: u.geomload("run", c, "--out", out, "--force", "--no-render")
                for n, c in (("symmetric", sym), ("unsymmetric", uns))}
        t = u.interleaved(cmds, u.repeats(2), budget_s=90.0)
    t_sym, t_uns = t.best("symmetric"), t.best("unsymmetric")
    ratio = t_uns / t_sym
    print(t.line("symmetric", "run --no-render, symmetric cases only"))
    print(t.line("unsymmetric", "run --no-render, + 12 rolling and 3 flaps-down cases"))
    print(f"  ratio {ratio:.2f} (target <= {TARGET_RATIO:g})")
    c_sym, c_uns = t.best_cpu("symmetric"), t.best_cpu("unsymmetric")
    floor = f"symmetric run {t_sym:.2f} s"
    return {
        "unsymmetric_vs_symmetric_ratio": (TARGET_RATIO, ratio, ratio / TARGET_RATIO, floor),
        "unsymmetric_vs_symmetric_cpu_ratio": (None, c_uns / c_sym, None,
                                               f"symmetric run cpu {c_sym:.2f} s"),
    }


if __name__ == "__main__":
    main()
