fn main() {
    println!("twistmode: under construction");
}
