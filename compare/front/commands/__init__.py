"""Sub-commands of the magcheck CLI, one module each (add_args + run)."""
