"""String sizing: how many modules in series, how many strings per input, from the code's limits.

The longest string
------------------
A module's open-circuit voltage rises as it gets colder; on a clear morning at the site's
lowest expected ambient temperature the cells sit near the air temperature with no load.
NFPA 70 (NEC) 690.7(A) gives two ways to correct Voc for that temperature:

``"coefficient"``
    With the module's temperature coefficient of Voc, β in %/°C:
    ``Voc_max = Voc_STC · (1 + β/100 · (T_low − 25 °C))`` (690.7(A)(1)).
``"table"``
    With the correction factor of Table 690.7(A) for crystalline and multicrystalline silicon
    at the lowest expected ambient temperature, ``Voc_max = Voc_STC · factor``
    (690.7(A)(2)). The factors are :data:`NEC_TABLE_690_7_A` (from memory of the 2017–2023
    editions; no copy of the table was at hand when they were entered).

The string's maximum voltage ``n · Voc_max`` must stay at or below the inverter's maximum DC
input voltage, the module's maximum system voltage and the code's limit for the building
(600 V for one- and two-family dwellings, 1000 V for other buildings, NEC 690.7). The
largest ``n`` that keeps all three is the longest string, and the one that binds is named.
Common practice also keeps the string's maximum-power voltage at the record low inside the
tracking window (``n · Vmp_cold <= mppt_max_v``); that limit is named too when it binds.

The shortest string
-------------------
On a hot afternoon the cells run well above the air: the cell temperature is the design
high ambient plus a rise for a roof mount. The rise defaults to the Sandia array performance
model's cell temperature at 1000 W/m² and 1 m/s of wind for the project's mount
(:func:`pvlib.temperature.sapm_cell`, King et al. 2004), about 49.5 °C for a close roof mount;
the user may type another. The maximum-power voltage falls with temperature by about the Pmax
coefficient (the current at maximum power changes little; common practice):
``Vmp_hot = Vmp_STC · (1 + γ/100 · (T_cell − 25 °C))``. The string's ``n · Vmp_hot`` must stay
at or above the tracking window's low end and the start voltage.

Strings per input
-----------------
Strings in parallel on one tracking input add their currents: common practice checks the
sum of their short-circuit currents against the input's maximum current, and the count
against the inverter's most strings per input.

This is a planning aid. The installer's licensed electrician and the inverter maker's sizing
tools decide; the authority having jurisdiction enforces NFPA 70 Article 690.

References
----------
.. [1] NFPA 70, National Electrical Code, Article 690.7(A) and Table 690.7(A).
.. [2] D. L. King, W. E. Boyson, J. A. Kratochvil, "Photovoltaic Array Performance Model",
   SAND2004-3535, Sandia National Laboratories, 2004.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import pvlib

from ..errors import InputError, check_fields, check_range, check_whole
from ..scene.inverter import InverterSpec
from ..scene.modules import ModuleSpec
from .irradiance import MOUNTS

__all__ = [
    "CODE_LIMITS_V",
    "NEC_TABLE_690_7_A",
    "VOC_METHODS",
    "StringDesign",
    "StringSizing",
    "cell_temperature_rise",
    "size_strings",
    "voc_correction_factor",
]

#: Ways to correct Voc for the cold, see the module docstring.
VOC_METHODS = ("coefficient", "table")

#: NEC 690.7 maximum PV DC voltage by building [V] (one- and two-family dwellings 600 V,
#: other buildings 1000 V; 1500 V where 690.7 allows it away from buildings).
CODE_LIMITS_V = (600.0, 1000.0, 1500.0)

#: NFPA 70 Table 690.7(A): (warmest °C of the row, coldest °C of the row, factor) for
#: crystalline and multicrystalline silicon modules, at the lowest expected ambient
#: temperature. From memory (2017-2023 editions), not copied from the code.
NEC_TABLE_690_7_A = (
    (24, 20, 1.02), (19, 15, 1.04), (14, 10, 1.06), (9, 5, 1.08), (4, 0, 1.10),
    (-1, -5, 1.12), (-6, -10, 1.14), (-11, -15, 1.16), (-16, -20, 1.18), (-21, -25, 1.20),
    (-26, -30, 1.21), (-31, -35, 1.23), (-36, -40, 1.25),
)

_FIELDS = ("record_low_c", "design_high_c", "voc_method", "roof_rise_c", "wind_speed_m_s",
           "code_max_voltage_v", "inputs")


@dataclass(frozen=True)
class StringDesign:
    """What the user typed for string sizing: design temperatures, method, code limit.

    Saved in the project file (section ``strings``).

    Parameters
    ----------
    record_low_c : float or None, default None
        The site's lowest expected ambient temperature [°C], -60 to 40 (for example the
        ASHRAE extreme annual mean minimum design dry bulb), typed by the user; sizing
        refuses to run without it.
    design_high_c : float or None, default None
        The site's high design ambient temperature [°C], above ``record_low_c``, -40 to 60,
        typed by the user; sizing refuses to run without it.
    voc_method : {"coefficient", "table"}, default "coefficient"
        NEC 690.7(A) correction of Voc, see the module docstring.
    roof_rise_c : float or None, default None
        Cell temperature above the air on a hot, bright afternoon [°C], 0 to 80; None takes it
        from the Sandia model for the project's mount (:func:`cell_temperature_rise`).
    wind_speed_m_s : float, default 1.0
        Wind speed for that default rise [m/s], 0 to 20.
    code_max_voltage_v : float, default 600
        The code's voltage limit for the building [V], one of :data:`CODE_LIMITS_V` (600 V for
        one- and two-family dwellings, NEC 690.7).
    inputs : tuple of int or None, default None
        Tracking input (0 to inputs - 1) of each of the user's strings, in the order of
        ``energy.electrical.strings``; None lets eaveline assign them.
    """

    record_low_c: float | None = None
    design_high_c: float | None = None
    voc_method: str = "coefficient"
    roof_rise_c: float | None = None
    wind_speed_m_s: float = 1.0
    code_max_voltage_v: float = 600.0
    inputs: tuple[int, ...] | None = None

    def __post_init__(self):
        set_ = object.__setattr__
        high = low = None
        if self.design_high_c is not None:
            high = check_range("design_high_c", self.design_high_c, -40.0, 60.0, unit="°C")
            set_(self, "design_high_c", high)
        if self.record_low_c is not None:
            low = check_range("record_low_c", self.record_low_c, -60.0, 40.0, unit="°C")
            set_(self, "record_low_c", low)
        if low is not None and high is not None and low >= high:
            raise InputError("record_low_c", "must be below the design high temperature",
                             value=self.record_low_c, allowed=f"below design_high_c = {high:g} °C")
        if self.voc_method not in VOC_METHODS:
            raise InputError("voc_method", "unknown Voc correction", value=self.voc_method,
                             allowed=", ".join(VOC_METHODS))
        if self.voc_method == "table" and low is not None:
            voc_correction_factor(low, method="table")  # raises below the table's range
        if self.roof_rise_c is not None:
            set_(self, "roof_rise_c", check_range("roof_rise_c", self.roof_rise_c, 0.0, 80.0,
                                                  unit="°C"))
        set_(self, "wind_speed_m_s", check_range("wind_speed_m_s", self.wind_speed_m_s, 0.0,
                                                 20.0, unit="m/s"))
        if self.code_max_voltage_v not in CODE_LIMITS_V or isinstance(self.code_max_voltage_v,
                                                                      bool):
            raise InputError("code_max_voltage_v", "is not a code voltage limit",
                             value=self.code_max_voltage_v,
                             allowed=", ".join(f"{v:g}" for v in CODE_LIMITS_V) + " V")
        set_(self, "code_max_voltage_v", float(self.code_max_voltage_v))
        if self.inputs is not None:
            values = self.inputs
            if isinstance(values, (str, bytes)) or not hasattr(values, "__iter__"):
                raise InputError("inputs", "must be a list of input numbers", value=values)
            values = tuple(values)
            for i, value in enumerate(values):
                check_whole(f"inputs[{i}]", value, 0, problem="must be a whole number from 0")
            set_(self, "inputs", values)

    def to_dict(self) -> dict:
        """Plain-data form used by the project file."""
        data = {key: getattr(self, key) for key in _FIELDS}
        data["inputs"] = None if self.inputs is None else list(self.inputs)
        return data

    @classmethod
    def from_dict(cls, data: dict) -> StringDesign:
        """Inverse of :meth:`to_dict`; raises :class:`InputError` naming the bad field."""
        check_fields(data, _FIELDS, what="string design")
        return cls(**data)


def voc_correction_factor(record_low_c: float, *, method: str = "coefficient",
                          temp_coeff_voc_pct: float | None = None) -> float:
    """Factor that takes Voc at STC to Voc at the lowest expected ambient temperature.

    Parameters
    ----------
    record_low_c : float
        Lowest expected ambient temperature [°C].
    method : {"coefficient", "table"}, keyword-only
        NEC 690.7(A)(1) with the module's coefficient, or Table 690.7(A).
    temp_coeff_voc_pct : float, keyword-only, optional
        Temperature coefficient of Voc [%/°C] (coefficient method only).

    Returns
    -------
    float
        ``1 + β/100 · (T − 25)``, or the table's factor (1.0 at 25 °C and above, where the
        table asks for no correction). A temperature between two whole-degree rows takes
        the colder row's factor.

    References
    ----------
    .. [1] NFPA 70, National Electrical Code, 690.7(A) and Table 690.7(A).
    """
    low = check_range("record_low_c", record_low_c, -60.0, 40.0, unit="°C")
    if method == "coefficient":
        if temp_coeff_voc_pct is None:
            raise InputError("temp_coeff_voc_pct", "is needed by the coefficient method",
                             allowed="the module's datasheet value, -1 to 0 %/°C")
        beta = check_range("temp_coeff_voc_pct", temp_coeff_voc_pct, -1.0, 0.0, unit="%/°C")
        return 1.0 + beta / 100.0 * (low - 25.0)  # 690.7(A)(1)
    if method != "table":
        raise InputError("voc_method", "unknown Voc correction", value=method,
                         allowed=", ".join(VOC_METHODS))
    if low >= 25.0:
        return 1.0
    whole = math.floor(low)  # between rows: the colder one
    for warm, cold, factor in NEC_TABLE_690_7_A:
        if cold <= whole <= warm:
            return factor
    raise InputError("record_low_c", "is below the range of Table 690.7(A)", value=record_low_c,
                     allowed="-40 °C and warmer for the table; use the coefficient method")


def cell_temperature_rise(mount: str = "close_mount_glass_glass", *,
                          wind_speed_m_s: float = 1.0) -> float:
    """Cell temperature above the air at 1000 W/m² for a mount, by the Sandia model [°C].

    Parameters
    ----------
    mount : str, default "close_mount_glass_glass"
        One of pvlib's SAPM parameter sets (:data:`layout.power.irradiance.MOUNTS`).
    wind_speed_m_s : float, keyword-only, default 1.0
        Wind speed at 10 m [m/s].

    Returns
    -------
    float
        ``sapm_cell(1000 W/m², 0 °C, wind) − 0 °C``: the model is linear in the air
        temperature, so this is the rise at any air temperature.

    References
    ----------
    .. [1] D. L. King, W. E. Boyson, J. A. Kratochvil, SAND2004-3535, Eq. 11-12, through
       :func:`pvlib.temperature.sapm_cell`.
    """
    if mount not in MOUNTS:
        raise InputError("mount", "unknown cell-temperature mount", value=mount,
                         allowed=", ".join(MOUNTS))
    params = pvlib.temperature.TEMPERATURE_MODEL_PARAMETERS["sapm"][mount]
    return float(pvlib.temperature.sapm_cell(1000.0, 0.0, wind_speed_m_s, **params))


@dataclass(frozen=True)
class StringSizing:
    """The allowed strings of one module on one inverter, with the values used and the limits.

    Attributes
    ----------
    min_length, max_length : int
        Fewest and most modules in series.
    min_length_limit, max_length_limit : str
        The limit that sets each, in words.
    strings_per_input : int
        Most strings in parallel on one tracking input.
    strings_per_input_limit : str
        The limit that sets it.
    voc_cold_v, vmp_cold_v, vmp_hot_v : float
        Per module: Voc and Vmp at the record low, Vmp at the hot cell temperature [V].
    voc_factor : float
        The Voc correction factor used.
    cell_temp_hot_c : float
        Hot cell temperature [°C] (design high plus the rise).
    roof_rise_c : float
        The rise used [°C], and ``roof_rise_source`` where it came from.
    roof_rise_source : str
    design : StringDesign
        The typed values.
    inverter : InverterSpec
    module : ModuleSpec
    """

    min_length: int
    max_length: int
    min_length_limit: str
    max_length_limit: str
    strings_per_input: int
    strings_per_input_limit: str
    voc_cold_v: float
    vmp_cold_v: float
    vmp_hot_v: float
    voc_factor: float
    cell_temp_hot_c: float
    roof_rise_c: float
    roof_rise_source: str
    design: StringDesign
    inverter: InverterSpec
    module: ModuleSpec

    def dc_ac_ratio(self, n_modules: int) -> float:
        """DC (STC) power of ``n_modules`` over the inverters' rated AC power."""
        return n_modules * self.module.power_w / self.inverter.total_ac_power_w

    def lines(self) -> list[str]:
        """Return the sizing in plain words: values used, lengths and the limit that sets each."""
        d, inv, m = self.design, self.inverter, self.module
        method = ("module coefficient, NEC 690.7(A)(1)" if d.voc_method == "coefficient"
                  else "Table 690.7(A) factor")
        return [
            f"record low {d.record_low_c:g} °C: Voc {m.voc_v:g} V × {self.voc_factor:.4f} "
            f"({method}) = {self.voc_cold_v:.2f} V per module",
            f"design high {d.design_high_c:g} °C + {self.roof_rise_c:.1f} °C rise "
            f"({self.roof_rise_source}) = cell {self.cell_temp_hot_c:.1f} °C: Vmp "
            f"{self.vmp_hot_v:.2f} V per module",
            f"longest string {self.max_length} modules ({self.max_length_limit})",
            f"shortest string {self.min_length} modules ({self.min_length_limit})",
            f"at most {self.strings_per_input} string(s) per tracking input "
            f"({self.strings_per_input_limit}); {inv.total_inputs} input(s) on "
            f"{inv.count} unit(s)",
        ]


def size_strings(module: ModuleSpec, inverter: InverterSpec, design: StringDesign, *,
                 mount: str = "close_mount_glass_glass") -> StringSizing:
    """Find the allowed string lengths and strings per input, naming each limit that binds.

    Parameters
    ----------
    module : layout.scene.modules.ModuleSpec
        Must carry its electrical data.
    inverter : layout.scene.inverter.InverterSpec
    design : StringDesign
        Design temperatures, Voc method and code limit.
    mount : str, keyword-only
        SAPM mount for the default roof rise.

    Returns
    -------
    StringSizing

    Raises
    ------
    InputError
        If the module lacks electrical data, or no string length meets every limit.

    References
    ----------
    .. [1] NFPA 70, National Electrical Code, 690.7(A).
    """
    missing = module.missing_electrical()
    if missing:
        raise InputError(f"module.{missing[0]}", "is needed for string sizing",
                         allowed="the datasheet values " + ", ".join(missing))
    for key, what in (("record_low_c", "the site's lowest expected ambient temperature"),
                      ("design_high_c", "the site's high design ambient temperature")):
        if getattr(design, key) is None:
            raise InputError(f"strings.{key}", "is needed for string sizing",
                             allowed=f"{what} in °C, typed by the user")
    factor = voc_correction_factor(design.record_low_c, method=design.voc_method,
                                   temp_coeff_voc_pct=module.temp_coeff_voc_pct)
    voc_cold = module.voc_v * factor
    gamma = module.temp_coeff_pmax_pct / 100.0
    vmp_cold = module.vmp_v * (1 + gamma * (design.record_low_c - 25.0))
    if design.roof_rise_c is None:
        rise = cell_temperature_rise(mount, wind_speed_m_s=design.wind_speed_m_s)
        source = (f"Sandia model, {mount.replace('_', ' ')}, 1000 W/m², "
                  f"{design.wind_speed_m_s:g} m/s wind")
    else:
        rise, source = design.roof_rise_c, "typed by the user"
    cell_hot = design.design_high_c + rise
    vmp_hot = module.vmp_v * (1 + gamma * (cell_hot - 25.0))

    upper = [
        (math.floor(inverter.max_dc_voltage_v / voc_cold + 1e-9),
         f"Voc at the record low {voc_cold:.2f} V × n <= inverter maximum DC input "
         f"{inverter.max_dc_voltage_v:g} V"),
        (math.floor(module.max_system_voltage_v / voc_cold + 1e-9),
         f"Voc at the record low × n <= module maximum system voltage "
         f"{module.max_system_voltage_v:g} V"),
        (math.floor(design.code_max_voltage_v / voc_cold + 1e-9),
         f"Voc at the record low × n <= code limit {design.code_max_voltage_v:g} V "
         "(NEC 690.7)"),
        (math.floor(inverter.mppt_max_v / vmp_cold + 1e-9),
         f"Vmp at the record low {vmp_cold:.2f} V × n <= tracking window top "
         f"{inverter.mppt_max_v:g} V (common practice)"),
    ]
    lower = [
        (math.ceil(inverter.mppt_min_v / vmp_hot - 1e-9),
         f"Vmp at cell {cell_hot:.1f} °C {vmp_hot:.2f} V × n >= tracking window bottom "
         f"{inverter.mppt_min_v:g} V"),
        (math.ceil(inverter.start_voltage_v / vmp_hot - 1e-9),
         f"Vmp at cell {cell_hot:.1f} °C × n >= start voltage {inverter.start_voltage_v:g} V"),
    ]
    max_length, max_limit = min(upper, key=lambda item: item[0])
    min_length, min_limit = max(lower, key=lambda item: item[0])
    min_length = max(min_length, 1)
    if max_length < 1 or max_length < min_length:
        raise InputError("string length", f"no string length meets every limit: at most "
                         f"{max_length} ({max_limit}), at least {min_length} ({min_limit})",
                         value=f"{min_length} to {max_length}",
                         allowed="an inverter whose tracking window suits this module")
    by_current = math.floor(inverter.max_input_current_a / module.isc_a + 1e-9)
    if by_current < 1:
        raise InputError("inverter.max_input_current_a", "is below one string's "
                         "short-circuit current", value=inverter.max_input_current_a,
                         allowed=f"at least Isc = {module.isc_a:g} A")
    if by_current < inverter.max_strings_per_input:
        per_input, per_limit = by_current, (
            f"n × Isc {module.isc_a:g} A <= input maximum {inverter.max_input_current_a:g} A "
            "(common practice)")
    else:
        per_input, per_limit = inverter.max_strings_per_input, "inverter's most strings per input"
    return StringSizing(
        min_length=min_length, max_length=max_length, min_length_limit=min_limit,
        max_length_limit=max_limit, strings_per_input=per_input,
        strings_per_input_limit=per_limit, voc_cold_v=voc_cold, vmp_cold_v=vmp_cold,
        vmp_hot_v=vmp_hot, voc_factor=factor, cell_temp_hot_c=cell_hot, roof_rise_c=rise,
        roof_rise_source=source, design=design, inverter=inverter, module=module)
