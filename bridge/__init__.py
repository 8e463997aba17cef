"""The user's side of plybridge: definition files, mesh and result formats,
zones and fibre orientation, section fields, the results store, run
orchestration and the ``plybridge`` command line."""
