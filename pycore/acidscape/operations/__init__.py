"""Layer 3, water operations: alkalinity, buffer, titration, dosing, closure, curves."""
