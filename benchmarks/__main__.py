"""``python -m benchmarks``: run the benchmark suite (see ``benchmarks/README.md``)."""

import sys

from benchmarks.run import main

sys.exit(main())
