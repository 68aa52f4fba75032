"""The link: budget, noise, feedline, atmosphere, polarization, modem and RF safety."""
