"""Layer 2, science: pure water, activity, temperature, speciation and the equilibrium model."""
