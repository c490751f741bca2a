"""Leafcast: lay out grow-room lighting and see the canopy PPFD and DLI it gives."""

__version__ = "0.2.0"
