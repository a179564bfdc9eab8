"""The Textual app (screens, widgets, one stylesheet). No physics here."""
