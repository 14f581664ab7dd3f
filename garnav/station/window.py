"""The station's pyvista window (placeholder until the window lands)."""
