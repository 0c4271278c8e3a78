"""burnproof's built-in flight-rule checks, one module per check.

They register through the ``burnproof`` entry-point group declared in
pyproject.toml, exactly as a third-party plugin package would.
"""
