"""The annual reserves review (issue 14): rules and the lock (rules), PRMS categories, snapshots
of the booked estimates (snapshot), bookings (booking), reconciliation (reconcile), the
draft -> submitted -> approved workflow (workflow) and read models with totals (views)."""
