"""Run every benchmark of the project and print one table: figure, target, measured, ratio to floor.

Each benchmarks/bench_*.py exposes main() -> {figure: (target, measured, ratio_to_floor)} and
prints its own details. Run: python benchmarks/run_all.py   (see DEVELOPERS.md)
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
            rows.append((path.stem, "-", f"FAILED: {type(exc).__name__}: {exc}", "-"))
            continue
        for name, (target, measured, ratio) in figures.items():
            rows.append((name, _fmt(target), _fmt(measured), _fmt(ratio)))
    w = max([len(r[0]) for r in rows] + [6])
    print()
    print(f"{'figure':<{w}}  {'target':>12}  {'measured':>12}  {'ratio to floor':>14}")
    for name, target, measured, ratio in rows:
        print(f"{name:<{w}}  {target:>12}  {measured:>12}  {ratio:>14}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
