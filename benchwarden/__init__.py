"""benchwarden: gas supply planning, leak checks and a session journal for gas-fed pulsed-discharge benches.

The package is layered (see DEVELOPERS.md): ``units`` at the bottom, pure computation modules
(``gas``, ``supply``, ``flow``, ``regulator``, ``gap``, ``hold``, ``room``, ``plan``) above it,
``profile`` and ``journal`` for files, and the interfaces ``cli``, ``tui`` and ``checklist`` on top.
Nothing here imports CoolProp at import time.
"""

__version__ = "0.1.0"
