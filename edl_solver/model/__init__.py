"""The Python faces that state the physics: packing, scaling, grid, equilibrium, profiles, thin layer,
validity notes and the bulk electrolyte."""
