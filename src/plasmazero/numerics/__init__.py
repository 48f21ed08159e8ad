"""Numerics layer: the compiled stiff integrator for species balances."""
