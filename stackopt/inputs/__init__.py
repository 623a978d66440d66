"""Inputs: read scenario and cost-table files into validated models (units, errors)."""
