"""Compare a freshly generated validation table with docs/validation.md (used by .ci/run).

The rows are compared by (source, quantity, test) and pass/fail, not by the measured digits,
which may differ in the last places between machines. Exit 1 with the differences when the
committed table no longer describes the suite: regenerate it with
`GEOMLOAD_VALIDATION_MD=docs/validation.md pytest` and commit it.
"""

import sys


def rows(path):
    out = set()
    with open(path, encoding="utf-8") as fh:
        for line in fh:
            cells = [c.strip() for c in line.strip().strip("|").split("|")]
            if len(cells) == 7 and cells[0] not in ("source", "---"):
                out.add((cells[0], cells[1], cells[6], cells[5]))
    return out


def main(fresh, committed):
    a, b = rows(fresh), rows(committed)
    if a == b:
        print(f"validation table up to date ({len(a)} checks)")
        return 0
    for r in sorted(a - b)[:20]:
        print("not in docs/validation.md:", " | ".join(r))
    for r in sorted(b - a)[:20]:
        print("no longer in the suite:", " | ".join(r))
    print("docs/validation.md is stale: run GEOMLOAD_VALIDATION_MD=docs/validation.md pytest")
    return 1


if __name__ == "__main__":
    sys.exit(main(sys.argv[1], sys.argv[2]))
