"""Gas PVT: z-factor correlations, pseudo-criticals, gas properties, lab tables, condensate and
well-stream gravity."""
