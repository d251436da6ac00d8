"""Pure, vectorized scientific functions: numpy arrays in, arrays out, SI units.

Nothing here touches a database or a file other than the reference tables
shipped in ``ratebank/science/data``. Submodules are imported explicitly
(``from ratebank.science import collision``) so that importing the package
stays cheap.
"""
