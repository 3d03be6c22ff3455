"""Flat public API: ``from bypassopt.api import InstalledEngineGroup, build_best_cycle_problem, ...``."""

from bypassopt.components.atmosphere.atmosphere_comp import AtmosphereComp
from bypassopt.components.atmosphere.flight_condition_comp import FlightConditionComp
from bypassopt.components.atmosphere.flight_condition_group import FlightConditionGroup
from bypassopt.components.cycle.burner_comp import BurnerComp
from bypassopt.components.cycle.compressor_comp import CompressorComp
from bypassopt.components.cycle.cooling_comp import CoolingBleedComp
from bypassopt.components.cycle.cooling_mix_comp import CoolingMixComp
from bypassopt.components.cycle.core_size_efficiency_comp import CoreSizeEfficiencyComp
from bypassopt.components.cycle.cycle_group import TurbofanCycleGroup
from bypassopt.components.cycle.duct_comp import DuctComp
from bypassopt.components.cycle.fan_comp import FanComp
from bypassopt.components.cycle.fan_shock_loss_comp import FanShockLossComp
from bypassopt.components.cycle.flight_node_engine_group import (FlightNodeBroadcastComp, FlightNodeEngineGroup,
                                                                 ThrottleRatingComp)
from bypassopt.components.cycle.flow_capacity_comp import FlowCapacityComp
from bypassopt.components.cycle.inlet_comp import InletComp
from bypassopt.components.cycle.multipoint_group import MultipointEngineGroup
from bypassopt.components.cycle.nozzle_comp import NozzleComp
from bypassopt.components.cycle.off_design_group import OffDesignGroup
from bypassopt.components.cycle.performance_comp import PerformanceComp
from bypassopt.components.cycle.sizing_comp import SizingComp
from bypassopt.components.cycle.spool_power_comp import SpoolPowerComp
from bypassopt.components.cycle.turbine_comp import TurbineComp
from bypassopt.components.gas.thermo import CaloricallyPerfectGas, ThermallyPerfectGas
from bypassopt.components.installation.engine_mass_comp import EngineMassComp
from bypassopt.components.installation.fan_sizing_comp import FanSizingComp
from bypassopt.components.installation.gearbox_comp import GearboxComp
from bypassopt.components.installation.ground_clearance_comp import GroundClearanceComp
from bypassopt.components.installation.installed_engine_group import InstalledEngineGroup
from bypassopt.components.installation.installed_multipoint_group import InstalledMultipointGroup
from bypassopt.components.installation.installed_performance_comp import InstalledPerformanceComp
from bypassopt.components.installation.lp_spool_comp import LPSpoolComp
from bypassopt.components.installation.nacelle_drag_comp import NacelleDragComp
from bypassopt.components.installation.nacelle_geometry_comp import NacelleGeometryComp
from bypassopt.components.installation.statistical_engine_mass_comp import StatisticalEngineMassComp
from bypassopt.components.interface import ALL_PLAIN, InterfaceGroup
from bypassopt.components.mission.cruise_thrust_comp import CruiseThrustComp
from bypassopt.components.mission.mission_fuel_comp import MissionFuelComp
from bypassopt.problems.best_cycle import build_best_cycle_problem, build_evaluation_problem
from bypassopt.problems.kkt import kkt_analysis
from bypassopt.scenario import ScenarioError, load_scenario
from bypassopt.components.validation import InputRangeError

__all__ = [
    "AtmosphereComp", "FlightConditionComp", "FlightConditionGroup", "BurnerComp", "CompressorComp",
    "CoolingBleedComp", "CoolingMixComp", "TurbofanCycleGroup", "DuctComp", "FanComp", "InletComp", "NozzleComp",
    "PerformanceComp", "SizingComp", "SpoolPowerComp", "TurbineComp", "FlowCapacityComp", "OffDesignGroup",
    "MultipointEngineGroup", "InstalledMultipointGroup", "CruiseThrustComp", "FlightNodeEngineGroup",
    "ThrottleRatingComp", "FlightNodeBroadcastComp", "CoreSizeEfficiencyComp", "FanShockLossComp", "GearboxComp",
    "LPSpoolComp", "InterfaceGroup", "ALL_PLAIN",
    "CaloricallyPerfectGas",
    "ThermallyPerfectGas", "EngineMassComp", "FanSizingComp", "GroundClearanceComp", "InstalledEngineGroup",
    "InstalledPerformanceComp", "NacelleDragComp", "NacelleGeometryComp", "StatisticalEngineMassComp",
    "MissionFuelComp", "build_best_cycle_problem", "build_evaluation_problem", "kkt_analysis", "ScenarioError",
    "load_scenario", "InputRangeError",
]
