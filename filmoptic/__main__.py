"""``python -m filmoptic`` runs the command line."""

from filmoptic.cli import _entry

_entry()
