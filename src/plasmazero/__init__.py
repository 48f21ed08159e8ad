"""plasmazero: zero-dimensional gas-phase plasma chemistry.

Layers, lowest first (a layer imports only from the layers before it):

``data``        files on disk: YAML reading, cross-section sets, mechanisms, scenarios
``physics``     electron Boltzmann solver, rate laws, thermochemistry
``numerics``    the stiff species-balance integrator
``workflows``   discharge scenarios, scans, analysis
``interfaces``  command line, result files, plots
"""

__version__ = "0.1.0"
