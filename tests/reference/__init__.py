"""Test-only reference computations (Monte Carlo swarm, analytic model gases).

Never imported by the ``plasmazero`` package; ``tests/conftest.py`` puts ``tests/`` on
``sys.path`` so that test modules can ``from reference import montecarlo``.
"""
