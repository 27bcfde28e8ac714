//! Uses nidus through its re-exported ndarray, without the command line.

use nidus::metrics::{nodf, Order};
use nidus::ndarray::array;
use nidus::Network;

fn main() {
    let net = Network::from_array(array![[1, 1, 1], [1, 1, 0], [1, 0, 0]]).unwrap();
    println!("NODF {}", nodf(&net, Order::Sorted).unwrap().total);
}
