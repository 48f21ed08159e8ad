"""Physics layer: electron kinetics, rate laws and thermochemistry (SI units inside)."""
