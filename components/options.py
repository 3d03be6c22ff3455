"""Options every bypassopt component declares the same way: the vectorisation length and the gas model."""

from bypassopt.components.gas.thermo import ThermallyPerfectGas
from bypassopt.components.validation import check_gas_option, check_positive_option


def declare_num_nodes(options):
    """Declare ``num_nodes``: designs (or flight points) evaluated at once; every variable has this length."""
    options.declare("num_nodes", types=int, default=1, check_valid=check_positive_option,
                    desc="number of design points evaluated at once (vectorisation length)")


def declare_gas(options):
    """Declare ``gas``: the working-gas model shared by the elements (thermally or calorically perfect)."""
    options.declare("gas", types=object, default=ThermallyPerfectGas(), check_valid=check_gas_option,
                    recordable=False,
                    desc="working-gas model: ThermallyPerfectGas or CaloricallyPerfectGas "
                         "(bypassopt.components.gas.thermo)")
