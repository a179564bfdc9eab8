"""``python -m gasbench``: the same as the ``gasbench`` command."""

from gasbench.cli import main

raise SystemExit(main())
