"""Numerical core of heatstack: grid, conductance network, schedule protocol, solver.

Nothing in this package knows about aircraft; it sees cells, faces, conductances,
capacities, sources and boundary laws.
"""
