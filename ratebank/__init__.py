"""ratebank: a curated store of gas-phase rate parameters.

The package is layered (each layer imports only those below it)::

    cli -> report -> io -> services -> store -> science

``ratebank.science`` is pure numerics and can be used on its own, for example
``from ratebank.science import collision``.
"""

__version__ = "0.1.0"
