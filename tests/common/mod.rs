pub mod plant;
