//! Weather for the solar drive: synthetic daily clearness sequences and weather-file readers.
