"""``python -m gasbench`` runs the same command line as the ``gasbench`` script."""

from gasbench.cli import main

raise SystemExit(main())
