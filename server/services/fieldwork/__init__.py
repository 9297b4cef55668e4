"""A field's workbench: analysis choices and survey exclusions, notes, estimate history, the gas gravities."""
