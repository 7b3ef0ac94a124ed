"""The dashboard's pages, one file each (run by ``st.navigation`` from ``dashboard/app.py``)."""
