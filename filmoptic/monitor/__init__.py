"""Monitoring a layer while it grows: live readings → thickness, rate and time to stop."""
