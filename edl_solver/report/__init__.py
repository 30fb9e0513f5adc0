"""Text reports of results, and the number formatting they share."""
