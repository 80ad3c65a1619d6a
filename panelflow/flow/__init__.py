"""Flow: influence kernels, the factorised panel system, surface solution, field and streamlines.

Panels in, potential flow out. Plane boundaries (wall, free surface) enter the system as images.
"""
