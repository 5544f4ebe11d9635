//! Drawing of FRF plots, generic over a plotters backend. (Being built.)
