"""beltplan: timing-belt service and failure-risk planning for fleets and garages.

The engine (``fleet``, ``validate``, ``plan``, ``risk``, ``week``, ``export``) is pure: no file
access, no clock, no UI. ``fileio``, ``cli`` and ``tui`` are the thin layers around it.
"""

__version__ = "0.1.0"
