"""Henderson-Hasselbalch, written once: the case's plausibility check and the acid-base reading both use it.

It sits below the stages because validation (the case stage) needs it to tell a kPa PCO2 from an
mmHg one, and the reading needs it for the calculated pH; `notegen.acidbase.formulas` re-exports it.
"""

from __future__ import annotations

import math

__all__ = ["henderson_hasselbalch_hco3", "henderson_hasselbalch_ph"]


def henderson_hasselbalch_ph(pco2: float, hco3: float, pk: float = 6.1, solubility: float = 0.0307) -> float:
    """pH = pK' + log10(HCO3 / (S x PaCO2)).

    Henderson-Hasselbalch; constants as in CLSI C46-A (2001), pK' 6.1 and S 0.0307 mmol/L per mmHg
    (DuBose, Harrison's, uses 0.03).
    """
    return pk + math.log10(hco3 / (solubility * pco2))


def henderson_hasselbalch_hco3(ph: float, pco2: float, pk: float = 6.1, solubility: float = 0.0307) -> float:
    """HCO3 = S x PaCO2 x 10^(pH - pK'): the analyser's calculated bicarbonate (CLSI C46-A, 2001)."""
    return solubility * pco2 * 10 ** (ph - pk)
