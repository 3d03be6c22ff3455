"""Entry point of ``python -m benchmarks``: run every benchmark and write the results."""

from benchmarks.run import main

raise SystemExit(main())
