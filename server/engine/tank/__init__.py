"""The single gas tank: the (corrected) p/z line, its intervals, overpressure, Havlena-Odeh terms."""
