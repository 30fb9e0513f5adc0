"""Design-space sweeps: run, plan, store, profiles on common positions, and sweep files."""
