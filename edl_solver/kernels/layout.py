"""Layouts of the packed vectors and rows that the compiled steps share, each declared once, here.

Every layout is one table: its fields are laid end to end in the order they are declared below
(``Fields.take``), so no offset is written by hand and no two layouts can be kept in agreement by hand. The
indices are plain module-level ints, which numba reads as compile-time constants.

- codes: boundary conditions, ion models, status of a compiled solve;
- ``ION_*``: one ion of the case vector, SI (valence, bulk concentration, diffusivity);
- ``SPECIES_*``: one ion as the kernels take it (valence, weight z c / sum z^2 c, steric packing c N_A d^3);
- ``SITE_*`` and ``W_*``: one kind of acid-base site, and one wall (SI in the case vector, dimensionless
  in the kernels; the same slots);
- ``FLOW_*``: the flow condition at one end of the grid;
- ``P_*``: the case vector (``model.packing.case_vector``);
- ``S_*``: the scales of a case (``kernels.prepare.scales``); ``ISO_*``: an isolated wall's (zeta, sigma);
- ``I_*``: the section integrals (``kernels.fv1d.section_integrals``), then the response blocks
  (``response_offsets``); ``PROFILE_*``: the rows of a grid's (psi, u_eo, u_p) block;
- ``SUMMARY_KEYS``, ``SLOTS``, ``Z_*``: the summary vector; ``LAB_KEYS``, ``L_*``: the lab quantities of a
  response matrix.
"""

from __future__ import annotations


class Fields:
    """The fields of one packed vector or row, laid end to end in the order they are taken."""

    def __init__(self) -> None:
        self.size = 0
        self.spans: list[tuple[int, int]] = []

    def take(self, size: int = 1) -> int:
        """Append a field of ``size`` slots; returns where it starts."""
        start = self.size
        self.spans.append((start, size))
        self.size += size
        return start


# -- codes ----------------------------------------------------------------------------------------------------
# Boundary conditions at an end of the grid (a wall row's W_TYPE, a flow row's FLOW_CODE).
POTENTIAL = 0  # prescribed potential (Poisson) or velocity (Stokes)
FLUX = 1  # prescribed outward-normal derivative: the wall charge, 0 at a symmetry plane
ROBIN = 2  # Navier slip (Stokes only)
REGULATED = 3  # a charge that depends on the wall's potential (Poisson only)

# Metric of the cross-section: the exponent m of r^m (``inputs.geometry``'s ``metric``).
PLANAR = 0  # slit
AXISYMMETRIC = 1  # capillary

# Models of the ions in the diffuse layer.
PB = 0  # Poisson-Boltzmann, point ions
DH = 1  # Debye-Hueckel, linearised
STERIC = 2  # lattice gas of ions of one size (Bikerman 1942)
MODEL_CODES = {"pb": PB, "dh": DH, "steric": STERIC}

# Status of the compiled solve of one case (``kernels.adaptive``, ``kernels.batch``); what they mean to a user
# is ``results.schema.STATUS``.
CONVERGED = 0
NEWTON_FAILED = 1
ACCURACY_MISSED = 2
IDENTITY_FAILED = 3

# -- one ion --------------------------------------------------------------------------------------------------
ION = Fields()
ION_VALENCE = ION.take()
ION_CONCENTRATION = ION.take()  # bulk, mol/m^3
ION_DIFFUSIVITY = ION.take()  # m^2/s
ION_SIZE = ION.size

SPECIES = Fields()
SPECIES_VALENCE = SPECIES.take()
SPECIES_WEIGHT = SPECIES.take()  # z c / sum_j z_j^2 c_j
SPECIES_PACKING = SPECIES.take()  # c N_A d^3 (0 without finite ion size)
SPECIES_SIZE = SPECIES.size

# -- walls ----------------------------------------------------------------------------------------------------
MAX_STATES = 4  # protonation states of one kind of site (up to three acid-base steps)
MAX_SITES = 4  # kinds of site on one wall

SITE = Fields()
SITE_DENSITY = SITE.take()  # sites per m^2 (SI), or their charge e N / (eps kT / e L) (kernels)
SITE_STATES = SITE.take()  # number of protonation states
SITE_CHARGES = SITE.take(MAX_STATES)  # charge number of each state
SITE_LOG_K = SITE.take(MAX_STATES - 1)  # per step: pK (SI), ln(K / [H+]_bulk) (kernels)
SITE_SIZE = SITE.size

WALL = Fields()
W_TYPE = WALL.take()  # POTENTIAL, FLUX or REGULATED
W_VALUE = WALL.take()  # the potential (V; kT/e) or the charge (C/m^2; eps kT / (e L)) of the first two
W_SIGMA = WALL.take()  # fixed charge of a regulated wall
W_GATE_C = WALL.take()  # gate capacitance (F/m^2; eps / L)
W_GATE_V = WALL.take()  # gate voltage (V; kT/e)
W_STERN = WALL.take()  # inverse Stern capacitance (m^2/F; L / eps), 0: no Stern layer
W_SITES = WALL.take()  # number of kinds of site
W_SITE0 = WALL.take(MAX_SITES * SITE_SIZE)  # the site blocks, SITE_SIZE each
WALL_SIZE = WALL.size

FLOW = Fields()
FLOW_CODE = FLOW.take()  # POTENTIAL (prescribed velocity), FLUX (prescribed derivative) or ROBIN (slip)
FLOW_VALUE = FLOW.take()  # the velocity, the derivative, or 1 / b_hat of the slip length b
FLOW_SIZE = FLOW.size

# -- the case vector (SI) -------------------------------------------------------------------------------------
CASE = Fields()
P_LENGTH = CASE.take()  # half-size L: slit half-height or capillary radius, m
P_METRIC = CASE.take()  # PLANAR (slit) or AXISYMMETRIC (capillary)
P_SYMMETRIC = CASE.take()  # 1 when one condition holds on every wall (half section solved)
P_MODEL = CASE.take()  # PB, DH or STERIC
P_TEMPERATURE = CASE.take()  # K
P_PERMITTIVITY = CASE.take()  # F/m
P_VISCOSITY = CASE.take()  # Pa s
P_VISCOELECTRIC = CASE.take()  # m^2/V^2
P_FIELD = CASE.take()  # V/m
P_PRESSURE_GRADIENT = CASE.take()  # Pa/m
P_PROTONS = CASE.take()  # bulk H+ concentration, mol/m^3 (NaN when the case has no pH)
P_DIAMETER = CASE.take()  # common ion diameter of the steric model, m (0 otherwise)
P_ACCURACY = CASE.take()
P_INTERVALS = CASE.take()  # fixed cells per half section, 0: adaptive
P_MAX_ITERATIONS = CASE.take()
P_MAX_INTERVALS = CASE.take()
P_BULK_FACTOR = CASE.take()  # bulk conductivity over its infinite-dilution value (1: the limiting law)
P_SLIP = CASE.take(2)  # Navier slip lengths of the (bottom, top) walls, m
P_WALLS = CASE.take(2 * WALL_SIZE)  # (bottom, top) SI wall rows
P_IONS = CASE.size  # then ION_SIZE values per ion, as many as the case has


def case_size(n_ions: int) -> int:
    """Length of the case vector of a case with ``n_ions`` ions."""
    return P_IONS + ION_SIZE * n_ions


# -- the scales of a case: SI values of the dimensionless units (see model.scaling.Scales) ---------------------
SCALES = Fields()
S_THERMAL_VOLTAGE = SCALES.take()  # kT/e, V
S_LENGTH = SCALES.take()  # L, m
S_DEBYE_LENGTH = SCALES.take()  # m
S_CHARGE_DENSITY = SCALES.take()  # eps kT / (e L), C/m^2
S_VOLUME_CHARGE = SCALES.take()  # e N_A sum z^2 c, C/m^3
S_EO_VELOCITY = SCALES.take()  # eps kT / (e eta), m^2/(V s)
S_PRESSURE_VELOCITY = SCALES.take()  # L^2 / eta, m^3/(Pa s)
S_AREA = SCALES.take()  # section sum over the computed nodes -> full-section integral
S_SECTION_AREA = SCALES.take()  # H per unit width, or pi a^2
SCALE_SIZE = SCALES.size

# A wall alone in the bulk: a row (zeta V, sigma C/m^2) per wall, bottom then top.
ISOLATED = Fields()
ISO_ZETA = ISOLATED.take()
ISO_SIGMA = ISOLATED.take()
ISOLATED_SIZE = ISOLATED.size

# -- the section integrals (dimensionless) --------------------------------------------------------------------
INTEGRALS = Fields()
I_PSI = INTEGRALS.take()  # int psi dV
I_UEO = INTEGRALS.take()  # int u_eo dV
I_UP = INTEGRALS.take()  # int u_p dV
I_RHO_UEO = INTEGRALS.take()  # int rho u_eo dV
I_RHO_UP = INTEGRALS.take()  # int rho u_p dV
I_RHO = INTEGRALS.take()  # int rho dV
I_PSI_LEFT = INTEGRALS.take()
I_PSI_RIGHT = INTEGRALS.take()
I_FLUX_LEFT = INTEGRALS.take()  # outward-normal derivative of psi at the left end (r^m sigma_hat)
I_FLUX_RIGHT = INTEGRALS.take()
I_PSI_CENTRE = INTEGRALS.take()
ION_INTEGRALS = INTEGRALS.size  # int c_k / c_k,bulk dV for each ion k, then the response blocks


def response_offsets(n_ions: int) -> tuple[int, int, int, int]:
    """Start of the three response blocks of the integral vector, and its total length.

    For the linear-response matrix of n ions: int u_j dV for the flow u_j driven by the body force on ion j
    (div(eta grad u_j) = -c_j / c_j,bulk), n values; int (c_i/c_i,bulk) u_p dV, n values; int (c_i/c_i,bulk)
    u_j dV, n*n values (row i, column j). Plain arithmetic, compiled where a kernel calls it.
    """
    first = ION_INTEGRALS + n_ions
    return first, first + n_ions, first + 2 * n_ions, first + 2 * n_ions + n_ions * n_ions


def integral_count(n_ions: int) -> int:
    """Length of the integral vector for ``n_ions`` ions."""
    return response_offsets(n_ions)[3]


# The rows of a grid's profile block (3, n): the potential and the two flows.
PROFILES = Fields()
PROFILE_PSI = PROFILES.take()
PROFILE_U_EO = PROFILES.take()
PROFILE_U_P = PROFILES.take()
PROFILE_ROWS = PROFILES.size

# -- the summary vector ---------------------------------------------------------------------------------------
# One slot per summary value, two for a value that holds a (bottom, top) pair, in the order of
# ``SUMMARY_KEYS`` (the order of ``Result.summary`` and of the files). ``results.schema`` gives each key its
# unit and long name.

#: Every summary value, in the order of the summary vector.
SUMMARY_KEYS: tuple[str, ...] = (
    "debye_length", "kappa_h", "zeta", "wall_charge_density", "stern_potential", "centre_potential",
    "mean_potential", "flow_rate_eo", "flow_rate_pressure", "mean_velocity_eo", "mean_velocity_pressure",
    "hs_velocity", "eo_ratio", "conduction_current", "streaming_current", "eo_convection_current", "current",
    "current_per_field", "thin_layer_zeta", "thin_layer_flow_rate_eo", "thin_layer_flow_rate_error",
    "thin_layer_mean_velocity_error", "thin_layer_max_outer_deviation", "conductance_per_length",
    "streaming_conductance", "streaming_potential_coefficient", "electroviscous_ratio", "eo_pump_flow_per_field",
    "eo_pump_pressure_per_voltage", "diffusioosmotic_flow", "diffusion_potential", "cation_transference",
    "selectivity", "figure_of_merit", "max_efficiency", "efficiency_at_max_power", "max_power_per_length",
    "thin_layer_conductance_per_length", "thin_layer_streaming_potential_coefficient",
    "thin_layer_electroviscous_ratio", "thin_layer_eo_pump_pressure_per_voltage", "thin_layer_diffusioosmotic_flow",
    "thin_layer_diffusion_potential", "thin_layer_cation_transference", "thin_layer_max_efficiency",
    "thin_layer_conductance_per_length_error", "thin_layer_streaming_potential_coefficient_error",
    "thin_layer_electroviscous_ratio_error", "thin_layer_eo_pump_pressure_per_voltage_error",
    "thin_layer_diffusioosmotic_flow_error", "thin_layer_diffusion_potential_error",
    "thin_layer_cation_transference_error", "thin_layer_max_efficiency_error", "charge_balance",
    "reciprocity_residual", "error_estimate",
)

#: Summary keys that hold a (bottom, top) pair: two slots each (equal for a symmetric case).
PAIR_KEYS = ("zeta", "wall_charge_density", "stern_potential", "hs_velocity", "thin_layer_zeta")


def _slots() -> tuple[dict[str, int], int]:
    summary = Fields()
    return {key: summary.take(2 if key in PAIR_KEYS else 1) for key in SUMMARY_KEYS}, summary.size


#: Where each summary key starts in the summary vector, and the vector's length.
SLOTS, SUMMARY_SIZE = _slots()

# Slots of the summary keys the kernels write by name.
Z_DEBYE_LENGTH = SLOTS["debye_length"]
Z_KAPPA_H = SLOTS["kappa_h"]
Z_ZETA = SLOTS["zeta"]
Z_SIGMA = SLOTS["wall_charge_density"]
Z_STERN = SLOTS["stern_potential"]
Z_CENTRE_POTENTIAL = SLOTS["centre_potential"]
Z_MEAN_POTENTIAL = SLOTS["mean_potential"]
Z_FLOW_RATE_EO = SLOTS["flow_rate_eo"]
Z_FLOW_RATE_PRESSURE = SLOTS["flow_rate_pressure"]
Z_MEAN_VELOCITY_EO = SLOTS["mean_velocity_eo"]
Z_MEAN_VELOCITY_PRESSURE = SLOTS["mean_velocity_pressure"]
Z_HS = SLOTS["hs_velocity"]
Z_EO_RATIO = SLOTS["eo_ratio"]
Z_CONDUCTION_CURRENT = SLOTS["conduction_current"]
Z_STREAMING_CURRENT = SLOTS["streaming_current"]
Z_EO_CONVECTION_CURRENT = SLOTS["eo_convection_current"]
Z_CURRENT = SLOTS["current"]
Z_CURRENT_PER_FIELD = SLOTS["current_per_field"]
Z_THIN_ZETA = SLOTS["thin_layer_zeta"]
Z_THIN_LAYER_FLOW_RATE_EO = SLOTS["thin_layer_flow_rate_eo"]
Z_THIN_LAYER_FLOW_RATE_ERROR = SLOTS["thin_layer_flow_rate_error"]
Z_THIN_LAYER_MEAN_VELOCITY_ERROR = SLOTS["thin_layer_mean_velocity_error"]
Z_THIN_LAYER_MAX_OUTER_DEVIATION = SLOTS["thin_layer_max_outer_deviation"]
Z_SELECTIVITY = SLOTS["selectivity"]
Z_CHARGE_BALANCE = SLOTS["charge_balance"]
Z_RECIPROCITY_RESIDUAL = SLOTS["reciprocity_residual"]
Z_ERROR_ESTIMATE = SLOTS["error_estimate"]

# -- the lab quantities of a 3 x 3 response matrix (``kernels.lab.lab_quantities``) -----------------------------
#: In the order of the vector ``lab_quantities`` fills; each is also a summary key.
LAB_KEYS = ("conductance_per_length", "streaming_conductance", "streaming_potential_coefficient",
            "electroviscous_ratio", "eo_pump_flow_per_field", "eo_pump_pressure_per_voltage",
            "diffusioosmotic_flow", "diffusion_potential", "figure_of_merit", "max_efficiency",
            "efficiency_at_max_power", "max_power_per_length", "cation_transference")
LAB = {key: at for at, key in enumerate(LAB_KEYS)}
LAB_SIZE = len(LAB_KEYS)
L_CONDUCTANCE = LAB["conductance_per_length"]
L_STREAMING_CONDUCTANCE = LAB["streaming_conductance"]
L_STREAMING_POTENTIAL = LAB["streaming_potential_coefficient"]
L_ELECTROVISCOUS = LAB["electroviscous_ratio"]
L_PUMP_FLOW = LAB["eo_pump_flow_per_field"]
L_PUMP_PRESSURE = LAB["eo_pump_pressure_per_voltage"]
L_DIFFUSIOOSMOTIC_FLOW = LAB["diffusioosmotic_flow"]
L_DIFFUSION_POTENTIAL = LAB["diffusion_potential"]
L_FIGURE_OF_MERIT = LAB["figure_of_merit"]
L_MAX_EFFICIENCY = LAB["max_efficiency"]
L_EFFICIENCY_AT_MAX_POWER = LAB["efficiency_at_max_power"]
L_MAX_POWER = LAB["max_power_per_length"]
L_TRANSFERENCE = LAB["cation_transference"]

#: Lab quantities whose thin-layer counterparts are reported with their relative error.
COMPARED = ("conductance_per_length", "streaming_potential_coefficient", "electroviscous_ratio",
            "eo_pump_pressure_per_voltage", "diffusioosmotic_flow", "diffusion_potential", "cation_transference",
            "max_efficiency")
