"""Test helpers shared by the stage folders: generated wings with known truth, reference solutions written independently of geomload, the validation record, and nothing-lost / browser fixtures."""
