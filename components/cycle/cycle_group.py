"""Design-point cycle of a separate-exhaust two-spool turbofan, sized to a net-thrust requirement."""

import numpy as np
import openmdao.api as om

from bypassopt.components.atmosphere.flight_condition_group import FlightConditionGroup
from bypassopt.components.coupled_solver import COUPLED_SOLVERS, last_solve_succeeded, set_coupled_solvers
from bypassopt.components.defaults import ENGINE_DEFAULTS
from bypassopt.components.options import declare_gas, declare_num_nodes

from .burner_comp import BurnerComp
from .compressor_comp import CompressorComp
from .cooling_comp import CoolingBleedComp
from .cooling_mix_comp import CoolingMixComp
from .duct_comp import DuctComp
from .fan_comp import FanComp
from .inlet_comp import InletComp
from .nozzle_comp import NozzleComp
from .performance_comp import PerformanceComp
from .sizing_comp import SizingComp
from .spool_power_comp import SpoolPowerComp
from .turbine_comp import TurbineComp

#: Specific thrust (N*s/kg) of the physics guess of W2 = Fn_required / FN_SPECIFIC_GUESS: the low end of
#: bypass engines in cruise, so the guess errs high (a high W2 only lowers the offtake per unit flow).
FN_SPECIFIC_GUESS = 100.0
#: Tt4 - Tt41 (K) of the physics guess of the Tt41 balance: the vane coolant cools the gas by tens of kelvin.
TT4_OVER_TT41_GUESS = 50.0


class TurbofanCycleGroup(om.Group):
    """Separate-exhaust two-spool turbofan at its design point, with the flight condition.

    Inputs a user sets (all promoted): ``altitude``, ``dT_isa``, ``Mach0`` (flight condition);
    ``BPR``, ``FPR``, ``OPR``, ``Tt4`` (cycle choices); ``booster_PR``; ``Fn_required`` (net thrust,
    N); component efficiencies and losses (``*_eff_poly``, ``inlet_recovery``, ``burner_pressure_loss``,
    ``combustion_eff``, ``*_duct_pressure_loss``, nozzle coefficients, ``*_mech_eff``), extractions
    (``customer_bleed_frac``, cooling fractions or correlation constants), ``HP_power_offtake`` (W),
    ``fuel_LHV``.

    Outputs: every station's ``Tt*``, ``Pt*`` (and ``FAR*``, ``W*_frac`` in the core), ``W2``,
    ``fuel_flow``, ``Fn_specific``, ``TSFC``, jet velocities ``Fg8_specific``/``Fg18_specific`` and
    ``jet_velocity_ratio``, thermal/propulsive/overall efficiencies, ``Tt3``, ``Tt41``,
    ``W3_corrected`` (core size), ``HP_shaft_power``, ``LP_shaft_power``.

    The elements work per unit inlet air flow; ``W2`` = ``Fn_required``/``Fn_specific``. The HP
    shaft offtake (W) divided by W2 enters the HP spool balance, which closes a loop through W2;
    with ``solve_sizing=True`` this group solves it with a Newton solver and a direct linear solver
    (one or two iterations, since the offtake is small). A parent group that closes a larger loop
    (the installed engine) sets ``solve_sizing=False`` and solves everything at once.

    With ``turbine_temperature_input='Tt41'`` the user sets ``Tt41_required`` (the rotor inlet
    temperature most limits are written against) and the group solves for ``Tt4`` with a balance
    (Newton; the parent solves it when ``solve_sizing=False``).

    Options select textbook special cases: ``gas=CaloricallyPerfectGas(...)`` switches every element
    to constant cp/gamma, ``include_fuel_mass=False`` neglects the fuel mass in the flows and the
    burner balance, ``nozzle_expansion='full'`` expands both jets to ambient pressure.
    """

    def initialize(self):
        """Declare options."""
        declare_num_nodes(self.options)
        declare_gas(self.options)
        self.options.declare("include_fuel_mass", types=bool, default=True,
                             desc="include the fuel mass in the flows (False: textbook ideal cycle)")
        self.options.declare("nozzle_expansion", default="convergent", values=("convergent", "full"),
                             desc="convergent nozzles (choked or not) or full expansion to ambient pressure")
        self.options.declare("cooling_model", default="correlation", values=("given", "correlation"),
                             desc="turbine cooling fractions given, or from the cooling-effectiveness correlation")
        self.options.declare("fan_core_side_ratio", default="equal", values=("equal", "input"),
                             desc="fan core-side pressure ratio equal to FPR, or an input of its own")
        self.options.declare("turbine_temperature_input", default="Tt4", values=("Tt4", "Tt41"),
                             desc="set the burner exit temperature Tt4, or the HPT rotor inlet temperature "
                                  "(input Tt41_required; Tt4 then follows from a balance solved by Newton)")
        self.options.declare("coupled_solver", default="newton", values=COUPLED_SOLVERS,
                             desc="'newton' (Newton + direct solver) or 'gauss_seidel' (block Gauss-Seidel, "
                                  "flat memory per design for very large vectorized sweeps)")
        self.options.declare("solve_sizing", types=bool, default=True,
                             desc="solve the W2 <-> HP offtake loop here (False: a parent group solves it)")

    def setup(self):
        """Assemble the elements in flow order."""
        nn = self.options["num_nodes"]
        gas = self.options["gas"]
        fuel = self.options["include_fuel_mass"]
        common = {"num_nodes": nn, "gas": gas}

        self.add_subsystem("flight", FlightConditionGroup(**common), promotes=["*"])
        self.add_subsystem("inlet", InletComp(**common), promotes=["*"])
        self.add_subsystem("fan", FanComp(core_side_ratio=self.options["fan_core_side_ratio"], **common),
                           promotes=["*"])
        self.add_subsystem("booster", CompressorComp(station_in="21", station_out="25", name="booster",
                                                     ratio_from="PR", **common), promotes=["*"])
        self.add_subsystem("lp_power", SpoolPowerComp(spool="LP", num_nodes=nn), promotes=["*"])
        self.add_subsystem("hpc", CompressorComp(station_in="25", station_out="3", name="hpc",
                                                 ratio_from="OPR", **common), promotes=["*"])
        self.add_subsystem("hp_power", SpoolPowerComp(spool="HP", num_nodes=nn), promotes=["*"])
        self.add_subsystem("cooling", CoolingBleedComp(cooling_model=self.options["cooling_model"], **common),
                           promotes=["*"])
        self.add_subsystem("burner", BurnerComp(include_fuel_mass=fuel, **common), promotes=["*"])
        self.add_subsystem("vane_mix", CoolingMixComp(station_in="4", station_out="41",
                                                      coolant_name="cooling_frac_vane",
                                                      include_fuel_mass=fuel, **common), promotes=["*"])
        self.add_subsystem("hpt", TurbineComp(station_in="41", station_out="44", name="hpt", spool="HP",
                                              **common), promotes=["*"])
        self.add_subsystem("rotor_mix", CoolingMixComp(station_in="44", station_out="45",
                                                       coolant_name="cooling_frac_rotor",
                                                       include_fuel_mass=fuel, **common), promotes=["*"])
        self.add_subsystem("lpt", TurbineComp(station_in="45", station_out="5", name="lpt", spool="LP",
                                              **common), promotes=["*"])
        self.add_subsystem("core_duct", DuctComp(station_in="5", station_out="7", name="core_duct", **common),
                           promotes=["*"])
        self.add_subsystem("bypass_duct", DuctComp(station_in="13", station_out="17", name="bypass_duct",
                                                   **common), promotes=["*"])
        expansion = self.options["nozzle_expansion"]
        # The exhaust duct carries no fuel-air ratio (DuctComp), so the core nozzle reads the LPT exit's.
        self.add_subsystem("core_nozzle", NozzleComp(station_in="7", station_throat="8", stream="core",
                                                     expansion=expansion, **common),
                           promotes_inputs=["*", ("FAR7", "FAR5")], promotes_outputs=["*"])
        self.add_subsystem("bypass_nozzle", NozzleComp(station_in="17", station_throat="18", stream="bypass",
                                                       expansion=expansion, **common), promotes=["*"])
        self.add_subsystem("performance", PerformanceComp(num_nodes=nn), promotes=["*"])
        self.add_subsystem("sizing", SizingComp(num_nodes=nn), promotes=["*"])

        ones = np.ones(nn)
        if self.options["turbine_temperature_input"] == "Tt41":
            # Tt4 becomes a state: Tt41 (after the vane coolant is mixed in) must equal the requirement.
            balance = om.BalanceComp("Tt4", val=1700.0 * ones, units="K", eq_units="K", lhs_name="Tt41",
                                     rhs_name="Tt41_required", rhs_val=1600.0 * ones, lower=1000.0, upper=2400.0,
                                     desc="burner exit temperature that gives the requested rotor inlet temperature")
            self.add_subsystem("t41_balance", balance, promotes=["*"])
        else:
            self.set_input_defaults("Tt4", 1650.0 * ones, units="K")
        self.set_input_defaults("BPR", 10.0 * ones)
        lhv, lhv_units = ENGINE_DEFAULTS["fuel_LHV"]
        self.set_input_defaults("fuel_LHV", lhv * ones, units=lhv_units)

        if self.options["solve_sizing"] or self.options["turbine_temperature_input"] == "Tt41":
            set_coupled_solvers(self, self.options["coupled_solver"], nn, maxiter=30)

    def guess_nonlinear(self, inputs, outputs, residuals):
        """Start the W2 loop no lower than ``Fn_required/Fn_specific``.

        The first Gauss-Seidel pass evaluates the HP spool with the guessed W2, and W2 enters the cycle
        only through the HP offtake per unit flow, ``HP_power_offtake/W2``. A guess far below the
        solution (the output default of 100 kg/s for a 100 kN engine with a 2 MW offtake, or a user's
        1 kg/s) asks the HP turbine for more work than the gas can give, and the pass stops with an
        AnalysisError although the design itself is feasible. So the guess is raised to the flow the
        thrust requirement needs at the last computed specific thrust (the output default of 100 N*s/kg
        on a first run, below the cruise values of bypass engines, so the guess errs high). A larger W2
        only lowers the offtake per unit flow, so this never makes the first pass infeasible; a larger
        guess and a converged solution are left as they are. It also runs when a parent group's solver
        closes the loop (the installed engine); it does nothing under complex step.

        When this group owns its solver (``solve_sizing=True``), the first solve and any solve after a failed
        one start from the inputs alone, never from what a failure left: ``W2 = Fn_required /
        FN_SPECIFIC_GUESS`` and, with ``turbine_temperature_input='Tt41'``, ``Tt4 = Tt41_required +
        TT4_OVER_TT41_GUESS``. (Inside the installed engine, that group's guess resets the loop.)
        """
        if self.under_complex_step:
            return
        if self.options["solve_sizing"] and not last_solve_succeeded(self):
            # own solver, first solve or the last one failed: start from the inputs alone
            outputs["W2"] = np.real(inputs["Fn_required"]) / FN_SPECIFIC_GUESS
            if self.options["turbine_temperature_input"] == "Tt41":
                outputs["Tt4"] = np.real(inputs["Tt41_required"]) + TT4_OVER_TT41_GUESS
            return
        fn_sp = np.real(outputs["Fn_specific"])
        w2 = np.real(outputs["W2"])
        need = np.real(inputs["Fn_required"]) / np.where(fn_sp > 0.0, fn_sp, 1.0)
        low = (fn_sp > 0.0) & (w2 < need)
        if np.any(low):
            outputs["W2"] = np.where(low, need, w2)
