"""Pages of the dashboard (Dash pages pattern): Data, Study, Screen and Company."""
