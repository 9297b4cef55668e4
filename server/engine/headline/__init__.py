"""The headline estimate: every model's EUR, the basis the evidence supports, its booked range."""
