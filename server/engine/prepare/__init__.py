"""From raw surveys and production to p/z points: datum correction, cumulatives, campaigns."""
