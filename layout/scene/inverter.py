"""A string inverter as a datasheet gives it: voltage limits, tracking inputs, currents, AC.

String sizing (:mod:`layout.power.string_sizing`) checks the strings of a layout against
these limits. One :class:`InverterSpec` may stand for ``count`` like units side by side; their
tracking inputs and AC ratings add up.

The two generic examples are values of our own, inside the ranges residential and small
commercial string-inverter datasheets print (common practice); they are no maker's product.
"""

from __future__ import annotations

from dataclasses import dataclass

from ..errors import InputError, check_fields, check_range

__all__ = ["InverterSpec", "generic_inverter_7kw", "generic_inverter_50kw"]

_FIELDS = ("max_dc_voltage_v", "mppt_min_v", "mppt_max_v", "start_voltage_v", "mppt_inputs",
           "max_input_current_a", "max_strings_per_input", "ac_power_w", "count", "name")


def _whole(field: str, value, low: int, high: int) -> int:
    if isinstance(value, bool) or not isinstance(value, (int, float)) or value != int(value) \
            or not low <= value <= high:
        raise InputError(field, "must be a whole number in range", value=value,
                         allowed=f"{low} to {high}")
    return int(value)


@dataclass(frozen=True)
class InverterSpec:
    """A string inverter: what its DC side accepts and what its AC side delivers.

    Parameters
    ----------
    max_dc_voltage_v : float
        Maximum DC input voltage [V], 50 to 1500. The cold-morning open-circuit voltage of a
        string must stay at or below it.
    mppt_min_v, mppt_max_v : float
        Tracking-window (MPPT) voltage range [V], ``0 < mppt_min_v < mppt_max_v <=
        max_dc_voltage_v``. A string's maximum-power voltage should stay inside it.
    start_voltage_v : float
        DC voltage at which the inverter starts [V], up to ``max_dc_voltage_v``.
    mppt_inputs : int
        Number of tracking inputs of one unit, 1 to 50.
    max_input_current_a : float
        Maximum DC current of one tracking input [A], 0.5 to 500.
    max_strings_per_input : int
        Most strings wired in parallel on one tracking input, 1 to 20.
    ac_power_w : float
        Rated AC power of one unit [W], 100 W to 1 MW.
    count : int, default 1
        Number of like units, 1 to 100.
    name : str, default ""
        A label for the user.
    """

    max_dc_voltage_v: float
    mppt_min_v: float
    mppt_max_v: float
    start_voltage_v: float
    mppt_inputs: int
    max_input_current_a: float
    max_strings_per_input: int
    ac_power_w: float
    count: int = 1
    name: str = ""

    def __post_init__(self):
        set_ = object.__setattr__
        top = check_range("max_dc_voltage_v", self.max_dc_voltage_v, 50.0, 1500.0, unit="V")
        set_(self, "max_dc_voltage_v", top)
        low = check_range("mppt_min_v", self.mppt_min_v, 0.0, top, unit="V", low_open=True,
                          high_open=True)
        set_(self, "mppt_min_v", low)
        set_(self, "mppt_max_v", check_range("mppt_max_v", self.mppt_max_v, low, top, unit="V",
                                             low_open=True))
        set_(self, "start_voltage_v", check_range("start_voltage_v", self.start_voltage_v, 0.0,
                                                  top, unit="V", low_open=True))
        set_(self, "mppt_inputs", _whole("mppt_inputs", self.mppt_inputs, 1, 50))
        set_(self, "max_input_current_a", check_range(
            "max_input_current_a", self.max_input_current_a, 0.5, 500.0, unit="A"))
        set_(self, "max_strings_per_input", _whole("max_strings_per_input",
                                                   self.max_strings_per_input, 1, 20))
        set_(self, "ac_power_w", check_range("ac_power_w", self.ac_power_w, 100.0, 1e6,
                                             unit="W"))
        set_(self, "count", _whole("count", self.count, 1, 100))
        if not isinstance(self.name, str):
            raise InputError("name", "must be text", value=self.name)

    @property
    def total_inputs(self) -> int:
        """Tracking inputs of all units together."""
        return self.mppt_inputs * self.count

    @property
    def total_ac_power_w(self) -> float:
        """Rated AC power of all units together [W]."""
        return self.ac_power_w * self.count

    def to_dict(self) -> dict:
        """Plain-data form used by the project file and ``--inverter`` files."""
        return {key: getattr(self, key) for key in _FIELDS}

    @classmethod
    def from_dict(cls, data: dict) -> InverterSpec:
        """Inverse of :meth:`to_dict`; raises :class:`InputError` naming the bad field."""
        check_fields(data, _FIELDS, what="inverter", required=_FIELDS[:8])
        return cls(**data)


def generic_inverter_7kw() -> InverterSpec:
    """Return a generic single-phase 7.6 kW string inverter (values of our own).

    600 V maximum DC input, tracking window 100 to 480 V, start at 100 V, 2 tracking inputs
    of 20 A, up to 2 strings each.
    """
    return InverterSpec(max_dc_voltage_v=600.0, mppt_min_v=100.0, mppt_max_v=480.0,
                        start_voltage_v=100.0, mppt_inputs=2, max_input_current_a=20.0,
                        max_strings_per_input=2, ac_power_w=7600.0,
                        name="generic 7.6 kW string inverter")


def generic_inverter_50kw(count: int = 1) -> InverterSpec:
    """Return a generic three-phase 50 kW string inverter (values of our own).

    1000 V maximum DC input, tracking window 250 to 850 V, start at 250 V, 6 tracking inputs
    of 30 A, up to 3 strings each.

    Parameters
    ----------
    count : int, default 1
        Number of like units.
    """
    return InverterSpec(max_dc_voltage_v=1000.0, mppt_min_v=250.0, mppt_max_v=850.0,
                        start_voltage_v=250.0, mppt_inputs=6, max_input_current_a=30.0,
                        max_strings_per_input=3, ac_power_w=50000.0, count=count,
                        name="generic 50 kW string inverter")
