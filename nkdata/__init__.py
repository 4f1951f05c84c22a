"""Optical-constant tables shipped with filmoptic (one plain-text file per dataset)."""
