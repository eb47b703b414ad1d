"""Real parts: preferred values, snapping, build composition, bills of materials."""
