"""Run every benchmark of the project and print one table: figure, target, measured, ratio to floor.

Each benchmarks/bench_*.py exposes main() -> {figure: (target, measured, measured / target)} and
prints its own details. Ratios to a floor measured in the same run (a bare numpy read, a bare
LAPACK LU, a single-case run) are figures of their own, named *_ratio.
Run: python benchmarks/run_all.py   (see DEVELOPERS.md)
"""

from __future__ import annotations

import importlib.util
import pathlib
import sys


def _load(path: pathlib.Path):
    spec = importlib.util.spec_from_file_location(path.stem, path)
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod


def _fmt(v):
    if v is None:
        return "-"
    if isinstance(v, float):
        return f"{v:.3g}"
    return str(v)


def main() -> int:
    here = pathlib.Path(__file__).resolve().parent
    rows = []
    for path in sorted(here.glob("bench_*.py")):
        print(f"== {path.name}", flush=True)
        try:
            figures = _load(path).main() or {}
        except Exception as exc:  # a broken benchmark is reported, the others still run
            rows.append((path.stem, "-", f"FAILED: {type(exc).__name__}: {exc}", "-", "NO"))
            continue
        for name, (target, measured, ratio) in figures.items():
            met = "-" if target is None else ("yes" if measured <= target else "NO")
            rows.append((name, _fmt(target), _fmt(measured), _fmt(ratio), met))
    w = max([len(r[0]) for r in rows] + [6])
    print()
    print(f"{'figure':<{w}}  {'target':>10}  {'measured':>10}  {'measured/target':>15}  met")
    for name, target, measured, ratio, met in rows:
        print(f"{name:<{w}}  {target:>10}  {measured:>10}  {ratio:>15}  {met}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
