"""Cost of one finished inductor: core, copper, winding labour and parts."""
from __future__ import annotations

import numpy as np


def inductor_cost(core_mass_kg, core_price_per_kg, copper_mass_kg, copper_price_per_kg, turns, parallel,
                  labour_per_turn, cores, part_cost_per_core, assembly_cost, processing_cost=0.0):
    """Bill-of-materials cost [currency units].

    Parameters
    ----------
    core_mass_kg : array [kg]           all stacked cores
    core_price_per_kg : array [1/kg]
    copper_mass_kg : array [kg]
    copper_price_per_kg : array [1/kg]  already scaled for litz where it applies
    turns, parallel : array [-]         labour is paid per turn of every parallel wire
    labour_per_turn : array             per turn; winding through a ring costs more than on a bobbin
    cores : array [-]                   stacked core sets (each needs clamps or coating)
    part_cost_per_core, assembly_cost : float
    processing_cost : array             core work: grinding gaps, cutting and banding ribbon cores

    Notes
    -----
    ``cost = m_core p_core + m_cu p_cu + N n_par c_turn + n_core c_part + c_asm + c_proc``: a plain bill of
    materials; representative prices live in catalog/data/costs.toml and materials.toml.
    """
    return (np.asarray(core_mass_kg) * core_price_per_kg + np.asarray(copper_mass_kg) * copper_price_per_kg
            + np.asarray(turns) * np.asarray(parallel) * labour_per_turn
            + np.asarray(cores) * part_cost_per_core + assembly_cost + np.asarray(processing_cost))
