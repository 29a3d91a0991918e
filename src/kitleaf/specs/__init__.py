"""Specs and checks: the solved kit measured into figures, claims verified, design rules run."""
