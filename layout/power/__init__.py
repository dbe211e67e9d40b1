"""From shade to energy: plane-of-array irradiance, electrical models, metrics, evaluation stages.

:mod:`.irradiance` applies shade to each component of the light on a module, :mod:`.electrical`
turns substring irradiance into DC power with a bypass-diode-aware model, :mod:`.metrics` sums
energy, shade loss, solar access, TOF and TSRF, and :mod:`.energy` holds the options and the
stages of one evaluation.
"""
