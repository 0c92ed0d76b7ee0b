"""`python -m geomload.cli`."""

from geomload.cli import main

main()
