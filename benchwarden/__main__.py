"""``python -m benchwarden`` runs the same command line as the ``benchwarden`` script."""

from benchwarden.cli import main

raise SystemExit(main())
