"""Presentation: renderers over shared helpers (display units, findings in words, the plan).

Nothing here computes physics or decides a severity; it words and formats what the
application layer (:mod:`benchwarden.workflows`) produced.
"""
