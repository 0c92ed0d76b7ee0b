"""`python -m geomload ...`: the same commands as the `geomload` console script."""

from geomload.cli import main

if __name__ == "__main__":
    main()
