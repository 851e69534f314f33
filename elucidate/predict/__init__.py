"""predict stage: the 1H (and 13C) spectrum of any structure by published
additive increment methods, each shift with its derivation.

    >>> from elucidate.predict import predict
    >>> [e.shift for e in predict("ClCCl").environments]
    [5.29]
"""

from elucidate.predict.core import DEFAULT_FIELD_MHZ, SOLVENTS, predict

__all__ = ["predict", "SOLVENTS", "DEFAULT_FIELD_MHZ"]
