"""Craft: the 3-DOF manoeuvring model, actuators, demo craft, integration, manoeuvres."""
