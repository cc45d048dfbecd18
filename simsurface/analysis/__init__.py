"""Physics analysis of conductance data: harmonics, temperature, dephasing, device plans."""
