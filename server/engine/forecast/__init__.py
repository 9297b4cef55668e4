"""The forecast: wells' deliverability, the field plan and the monthly profile to abandonment."""
