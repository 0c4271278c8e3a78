"""Orbit and propulsion core: pure functions over numpy arrays.

Nothing in this package knows about HTTP, schemas or plugins; it imports only
numpy and scipy. Units ride in every name (``_km``, ``_km_s``, ``_m_s``,
``_kg``, ``_s``, ``_rad``); angles are radians throughout.
"""
