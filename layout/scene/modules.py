"""PV module specifications: outer size, STC power, the cell grid and its bypass-diode substrings.

Module frame
------------
A module is described in its own frame, independent of how it is mounted:

- ``a`` runs along the module's **length** (its long side), from 0 to ``length_m``;
- ``b`` runs along its **width**, from 0 to ``width_m``.

Cells sit in a regular grid of ``cell_rows`` cells along the length and ``cell_columns``
cells across the width. Cell ``k`` has row ``k // cell_columns`` (counted along ``a``) and
column ``k % cell_columns`` (counted along ``b``). The cells are spread evenly over the whole
module area; the frame border and the gaps between cells are ignored, which shifts a cell
centre by at most a few centimetres.

Substrings
----------
Each bypass diode protects one substring, a band of cells:

- ``substring_axis="length"`` (the usual wiring): each substring is a band of whole cell
  columns running the full length of the module; with 6 columns and 3 diodes each substring is
  2 columns wide. A shadow across the short end of the module therefore touches every
  substring.
- ``substring_axis="width"``: each substring is a band of whole cell rows running across the
  module.

Electrical data
---------------
String sizing (:mod:`layout.power.string_sizing`) needs the datasheet values at standard test
conditions: ``voc_v``, ``isc_a``, ``vmp_v``, ``imp_a``, the temperature coefficients of Voc and
of Pmax (``temp_coeff_voc_pct``, ``temp_coeff_pmax_pct``, in %/°C as datasheets print them) and
the module's maximum system voltage (``max_system_voltage_v``). They are optional, so that a
module known only by its size and power still lays out and shades; :meth:`ModuleSpec.
missing_electrical` names the ones a sizing would need.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..errors import InputError, check_fields, check_positive, check_range

__all__ = [
    "ELECTRICAL_FIELDS",
    "MAX_EFFICIENCY",
    "STC_IRRADIANCE_W_M2",
    "SUBSTRING_AXES",
    "ModuleSpec",
    "generic_60_cell",
    "generic_72_cell",
    "generic_108_half_cell",
]

#: Irradiance at standard test conditions [W/m²] (IEC 60904-3 / ASTM G173 AM1.5 global).
STC_IRRADIANCE_W_M2 = 1000.0

#: Highest module efficiency accepted (fraction). The detailed-balance limit of a single-junction
#: cell is about 33 % near a 1.34 eV band gap (Shockley & Queisser 1961, J. Appl. Phys. 32:510;
#: 33.7 % under AM1.5 in later recalculations, from memory). Silicon's 1.1 eV gap sits below the
#: peak, and a module loses area to its frame, so a module at or above this is a typing error.
MAX_EFFICIENCY = 0.337

#: Allowed values of :attr:`ModuleSpec.substring_axis`.
SUBSTRING_AXES = ("length", "width")

#: The optional electrical fields of :class:`ModuleSpec` (values at STC), in document order.
ELECTRICAL_FIELDS = ("voc_v", "isc_a", "vmp_v", "imp_a", "temp_coeff_voc_pct",
                     "temp_coeff_pmax_pct", "max_system_voltage_v")

_FIELDS = (
    "length_m", "width_m", "power_w", "cell_rows", "cell_columns", "bypass_diodes",
    "substring_axis", "name", *ELECTRICAL_FIELDS,
)

# Vmp · Imp is the STC power; datasheets round both, so allow this much disagreement.
_POWER_TOLERANCE = 0.03


def _check_count(field: str, value, *, low: int = 1, high: int = 1000) -> int:
    """Return ``value`` as an int, or raise unless it is a whole number in low..high."""
    if isinstance(value, bool):
        raise InputError(field, "must be a whole number", value=value, allowed=f"{low} to {high}")
    try:
        number = float(value)
    except (TypeError, ValueError):
        raise InputError(field, "must be a whole number", value=value,
                         allowed=f"{low} to {high}") from None
    if not math.isfinite(number) or number != int(number) or not low <= number <= high:
        raise InputError(field, "must be a whole number in range", value=value,
                         allowed=f"{low} to {high}")
    return int(number)


@dataclass(frozen=True)
class ModuleSpec:
    """A PV module: outer size, power at STC and the layout of its cells and substrings.

    Parameters
    ----------
    length_m : float
        Outer length of the long side [m], at least ``width_m``.
    width_m : float
        Outer width of the short side [m].
    power_w : float
        Rated DC power at standard test conditions [W]. The efficiency
        ``power_w / (length_m · width_m · 1000 W/m²)`` must stay below :data:`MAX_EFFICIENCY`.
    cell_rows : int
        Number of cells along the length (10 for a 60-cell module, 12 for a 72-cell module,
        18 for a 108 half-cell module).
    cell_columns : int
        Number of cells across the width (usually 6).
    bypass_diodes : int, default 3
        Number of bypass diodes, one per substring.
    substring_axis : {"length", "width"}, default "length"
        Direction the substrings run, see the module docstring. With ``"length"``,
        ``cell_columns`` must divide evenly among the diodes; with ``"width"``, ``cell_rows``.
    name : str, default ""
        A label for the user.
    voc_v, vmp_v : float, optional
        Open-circuit and maximum-power voltage at STC [V]; ``vmp_v < voc_v``.
    isc_a, imp_a : float, optional
        Short-circuit and maximum-power current at STC [A]; ``imp_a < isc_a``. When both
        ``vmp_v`` and ``imp_a`` are given their product must be ``power_w`` within 3 %.
    temp_coeff_voc_pct : float, optional
        Temperature coefficient of Voc [%/°C], -1 to 0 (crystalline silicon about -0.25 to
        -0.35, common practice).
    temp_coeff_pmax_pct : float, optional
        Temperature coefficient of Pmax [%/°C], -1 to 0.
    max_system_voltage_v : float, optional
        The module's rated maximum system voltage [V], 100 to 1500 (600, 1000 or 1500 V on
        datasheets).
    """

    length_m: float
    width_m: float
    power_w: float
    cell_rows: int
    cell_columns: int
    bypass_diodes: int = 3
    substring_axis: str = "length"
    name: str = ""
    voc_v: float | None = None
    isc_a: float | None = None
    vmp_v: float | None = None
    imp_a: float | None = None
    temp_coeff_voc_pct: float | None = None
    temp_coeff_pmax_pct: float | None = None
    max_system_voltage_v: float | None = None

    def __post_init__(self):
        set_ = object.__setattr__
        length = check_positive("length_m", self.length_m, unit="m")
        width = check_positive("width_m", self.width_m, unit="m")
        if length > 10.0:
            raise InputError("length_m", "is too long for a rooftop module", value=self.length_m,
                             allowed="up to 10 m")
        if width > length:
            raise InputError("width_m", "must not exceed length_m (the long side)",
                             value=self.width_m, allowed=f"up to {length:g} m")
        set_(self, "length_m", length)
        set_(self, "width_m", width)
        power = check_positive("power_w", self.power_w, unit="W")
        limit_w = MAX_EFFICIENCY * length * width * STC_IRRADIANCE_W_M2
        if power >= limit_w:
            raise InputError(
                "power_w",
                f"implies an efficiency of {power / (length * width * STC_IRRADIANCE_W_M2):.1%}, "
                f"above the single-junction limit of about {MAX_EFFICIENCY:.1%} "
                "(Shockley-Queisser); check the power and the outer size",
                value=self.power_w,
                allowed=f"below {limit_w:.0f} W for a {length:g} m × {width:g} m module",
            )
        set_(self, "power_w", power)
        set_(self, "cell_rows", _check_count("cell_rows", self.cell_rows, high=200))
        set_(self, "cell_columns", _check_count("cell_columns", self.cell_columns, high=200))
        set_(self, "bypass_diodes", _check_count("bypass_diodes", self.bypass_diodes, high=50))
        if self.substring_axis not in SUBSTRING_AXES:
            raise InputError("substring_axis", "unknown direction", value=self.substring_axis,
                             allowed=", ".join(SUBSTRING_AXES))
        split_field, split = (
            ("cell_columns", self.cell_columns) if self.substring_axis == "length"
            else ("cell_rows", self.cell_rows)
        )
        if split % self.bypass_diodes:
            raise InputError(
                split_field,
                f"cannot be shared evenly among {self.bypass_diodes} bypass diodes "
                f"(substrings run along the {self.substring_axis})",
                value=split, allowed=f"a multiple of {self.bypass_diodes}",
            )
        if not isinstance(self.name, str):
            raise InputError("name", "must be text", value=self.name)
        self._check_electrical()

    def _check_electrical(self):
        set_ = object.__setattr__
        ranges = {"voc_v": (0.1, 1500.0, "V"), "isc_a": (0.01, 100.0, "A"),
                  "vmp_v": (0.1, 1500.0, "V"), "imp_a": (0.01, 100.0, "A"),
                  "temp_coeff_voc_pct": (-1.0, 0.0, "%/°C"),
                  "temp_coeff_pmax_pct": (-1.0, 0.0, "%/°C"),
                  "max_system_voltage_v": (100.0, 1500.0, "V")}
        for key, (low, high, unit) in ranges.items():
            value = getattr(self, key)
            if value is not None:
                set_(self, key, check_range(key, value, low, high, unit=unit))
        if self.voc_v is not None and self.vmp_v is not None and self.vmp_v >= self.voc_v:
            raise InputError("vmp_v", "must be below voc_v", value=self.vmp_v,
                             allowed=f"below {self.voc_v:g} V")
        if self.isc_a is not None and self.imp_a is not None and self.imp_a >= self.isc_a:
            raise InputError("imp_a", "must be below isc_a", value=self.imp_a,
                             allowed=f"below {self.isc_a:g} A")
        if self.vmp_v is not None and self.imp_a is not None:
            product = self.vmp_v * self.imp_a
            if abs(product / self.power_w - 1) > _POWER_TOLERANCE:
                raise InputError(
                    "imp_a", f"times vmp_v gives {product:.0f} W, not the module's power_w "
                    f"of {self.power_w:g} W", value=self.imp_a,
                    allowed=f"{self.power_w / self.vmp_v * (1 - _POWER_TOLERANCE):.2f} to "
                            f"{self.power_w / self.vmp_v * (1 + _POWER_TOLERANCE):.2f} A")

    def missing_electrical(self) -> tuple[str, ...]:
        """Names of the electrical fields not given (string sizing needs all of them)."""
        return tuple(key for key in ELECTRICAL_FIELDS if getattr(self, key) is None)

    # ----------------------------------------------------------------- derived values
    @property
    def area_m2(self) -> float:
        """Outer area of the module [m²]."""
        return self.length_m * self.width_m

    @property
    def efficiency(self) -> float:
        """STC efficiency over the outer area (fraction): power / (area · 1000 W/m²)."""
        return self.power_w / (self.area_m2 * STC_IRRADIANCE_W_M2)

    @property
    def cell_count(self) -> int:
        """Number of cells, ``cell_rows · cell_columns``."""
        return self.cell_rows * self.cell_columns

    @property
    def cells_per_substring(self) -> int:
        """Number of cells behind each bypass diode."""
        return self.cell_count // self.bypass_diodes

    @property
    def cell_size_m(self) -> tuple[float, float]:
        """Size of one cell's share of the module: (along the length, across the width) [m]."""
        return self.length_m / self.cell_rows, self.width_m / self.cell_columns

    def cell_centres(self) -> np.ndarray:
        """Cell centres in the module's own frame.

        Returns
        -------
        numpy.ndarray, shape (cell_count, 2)
            ``(a, b)`` of each cell centre [m], ``a`` along the length and ``b`` across the
            width, in cell-index order (row-major: cell ``k`` is row ``k // cell_columns``).
        """
        return self.cell_sample_points(1)[0]

    def cell_sample_points(self, samples_per_cell: int = 1) -> tuple[np.ndarray, np.ndarray]:
        """Sample points spread evenly inside each cell, in the module's own frame.

        Parameters
        ----------
        samples_per_cell : int, default 1
            Points per cell; a perfect square ``n²`` (1, 4, 9, …), laid out as an ``n × n``
            grid at the centres of equal sub-rectangles of the cell.

        Returns
        -------
        ab : numpy.ndarray, shape (cell_count · samples_per_cell, 2)
            ``(a, b)`` positions [m], grouped by cell in cell-index order.
        cell : numpy.ndarray of int, shape (cell_count · samples_per_cell,)
            Cell index of each point.
        """
        n = _samples_per_side(samples_per_cell)
        da, db = self.cell_size_m
        row, col = np.divmod(np.arange(self.cell_count), self.cell_columns)
        sub = (np.arange(n) + 0.5) / n
        sa, sb = np.meshgrid(sub, sub, indexing="ij")
        a = (row[:, None] + sa.ravel()[None, :]) * da
        b = (col[:, None] + sb.ravel()[None, :]) * db
        cell = np.repeat(np.arange(self.cell_count), n * n)
        return np.stack([a.ravel(), b.ravel()], axis=1), cell

    def substring_of_cell(self, cell):
        """Substring (bypass-diode) index of cell index ``cell``; works on arrays.

        Substrings are numbered from 0 along the width (``substring_axis="length"``) or along
        the length (``substring_axis="width"``).
        """
        index = np.asarray(cell)
        if np.any((index < 0) | (index >= self.cell_count)):
            raise InputError("cell", "is not a cell of this module", value=np.asarray(cell).tolist()
                             if index.size < 20 else None, allowed=f"0 to {self.cell_count - 1}")
        row, col = np.divmod(index, self.cell_columns)
        if self.substring_axis == "length":
            result = col // (self.cell_columns // self.bypass_diodes)
        else:
            result = row // (self.cell_rows // self.bypass_diodes)
        return int(result) if np.ndim(cell) == 0 else result

    # ----------------------------------------------------------------- data
    def to_dict(self) -> dict:
        """Plain-data form used by the project file."""
        data = {key: getattr(self, key) for key in _FIELDS}
        for key in ELECTRICAL_FIELDS:  # a module without electrical data keeps a short form
            if data[key] is None:
                del data[key]
        return data

    @classmethod
    def from_dict(cls, data: dict) -> ModuleSpec:
        """Inverse of :meth:`to_dict`; raises :class:`InputError` naming the bad field."""
        check_fields(data, _FIELDS, what="module",
                     required=("length_m", "width_m", "power_w", "cell_rows", "cell_columns"))
        return cls(**data)


def _samples_per_side(samples_per_cell) -> int:
    """Return n for ``samples_per_cell = n²``, or raise."""
    count = _check_count("samples_per_cell", samples_per_cell, high=10_000)
    side = math.isqrt(count)
    if side * side != count:
        raise InputError("samples_per_cell", "must be a perfect square", value=samples_per_cell,
                         allowed="1, 4, 9, 16, …")
    return side


# Typical outer sizes, REFERENCES.md "typical module sizes" (common practice).
# Electrical data of the generic modules are plausible values of our own, inside the ranges
# crystalline-silicon datasheets print (common practice), not any maker's datasheet: about
# 0.66 V open-circuit and 0.55 V at maximum power per full cell in series, Isc 6 % above Imp,
# Voc coefficient -0.29 %/°C (half cells -0.27), Pmax coefficient -0.37 %/°C (half cells
# -0.35), rated for 1000 V systems. Imp follows from the power asked for (Pmax = Vmp · Imp,
# to 0.01 A).
def _generic(length_m, width_m, power_w, rows, name, voc_v, vmp_v, beta_voc, gamma_pmax):
    imp = round(power_w / vmp_v, 2)
    return ModuleSpec(length_m, width_m, power_w, cell_rows=rows, cell_columns=6, name=name,
                      voc_v=voc_v, isc_a=round(imp * 1.06, 2), vmp_v=vmp_v, imp_a=imp,
                      temp_coeff_voc_pct=beta_voc, temp_coeff_pmax_pct=gamma_pmax,
                      max_system_voltage_v=1000.0)


def generic_60_cell(power_w: float, *, name: str = "generic 60-cell") -> ModuleSpec:
    """Return a generic 60-cell module: 1.650 m × 0.991 m, 10 × 6 cells, 3 diodes (common practice).

    Electrical data of our own: Voc 39.6 V, Vmp 33.0 V, Imp = power / Vmp, Isc = 1.06 Imp,
    -0.29 %/°C (Voc), -0.37 %/°C (Pmax), 1000 V.

    Parameters
    ----------
    power_w : float
        STC power [W], from the datasheet of the module meant.
    name : str
        Label.
    """
    return _generic(1.650, 0.991, power_w, 10, name, 39.6, 33.0, -0.29, -0.37)


def generic_72_cell(power_w: float, *, name: str = "generic 72-cell") -> ModuleSpec:
    """Return a generic 72-cell module: 1.956 m × 0.991 m, 12 × 6 cells, 3 diodes (common practice).

    Electrical data of our own: Voc 47.5 V, Vmp 39.6 V, Imp = power / Vmp, Isc = 1.06 Imp,
    -0.29 %/°C (Voc), -0.37 %/°C (Pmax), 1000 V.

    Parameters
    ----------
    power_w : float
        STC power [W], from the datasheet of the module meant.
    name : str
        Label.
    """
    return _generic(1.956, 0.991, power_w, 12, name, 47.5, 39.6, -0.29, -0.37)


def generic_108_half_cell(power_w: float, *,
                          name: str = "generic 108 half-cell") -> ModuleSpec:
    """Return a generic 108 half-cell module: 1.722 m × 1.134 m, 18 × 6 half cells, 3 diodes.

    Sizes are common practice. The two halves of a half-cell module are wired in parallel
    behind the same three diodes, so each substring is still a band of two columns running
    the full length (``substring_axis="length"``), and 54 half cells are in series.
    Electrical data of our own: Voc 37.2 V, Vmp 31.0 V, Imp = power / Vmp, Isc = 1.06 Imp,
    -0.27 %/°C (Voc), -0.35 %/°C (Pmax), 1000 V.

    Parameters
    ----------
    power_w : float
        STC power [W], from the datasheet of the module meant.
    name : str
        Label.
    """
    return _generic(1.722, 1.134, power_w, 18, name, 37.2, 31.0, -0.27, -0.35)
