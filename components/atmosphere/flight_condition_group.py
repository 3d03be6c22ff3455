"""Flight condition: ISO 2533 standard atmosphere followed by the real-gas free-stream state."""

import openmdao.api as om


from bypassopt.components.atmosphere.atmosphere_comp import AtmosphereComp
from bypassopt.components.atmosphere.flight_condition_comp import FlightConditionComp
from bypassopt.components.options import declare_gas, declare_num_nodes


class FlightConditionGroup(om.Group):
    """Free-stream state at a geopotential altitude, temperature offset and flight Mach number.

    ``atmosphere`` (:class:`AtmosphereComp`, ISO 2533:1975, 0-20 000 m) gives the static temperature,
    pressure, density and viscosity; ``flight_condition`` (:class:`FlightConditionComp`) adds the
    real-gas speed of sound, true airspeed, total temperature and pressure, dynamic pressure and unit
    Reynolds number. All inputs (``altitude``, ``dT_isa``, ``Mach0``) and outputs (``Ts0``, ``Ps0``,
    ``rho0``, ``a0_std``, ``mu0``, ``a0``, ``V0``, ``Tt0``, ``Pt0``, ``q0``, ``Re_per_m0``) are promoted.
    Valid range: the union of the two components' ranges (altitude 0-20 000 m, dT_isa -60 to +60 K,
    Mach0 0-0.95, Ts0 inside the gas model's range).
    """

    def initialize(self):
        """Declare options."""
        declare_num_nodes(self.options)
        declare_gas(self.options)

    def setup(self):
        """Add the atmosphere and flight-condition components."""
        nn = self.options["num_nodes"]
        self.add_subsystem("atmosphere", AtmosphereComp(num_nodes=nn), promotes=["*"])
        self.add_subsystem("flight_condition", FlightConditionComp(num_nodes=nn, gas=self.options["gas"]),
                           promotes=["*"])
