fn main() { println!("{}", seine::version()); }
