//! Disjoint sets with path halving and union by size.

/// Union-find over `0..n`.
#[derive(Debug, Clone)]
pub struct UnionFind {
    parent: Vec<u32>,
    size: Vec<u32>,
}

impl UnionFind {
    pub fn new(n: usize) -> Self {
        UnionFind {
            parent: (0..n as u32).collect(),
            size: vec![1; n],
        }
    }

    /// A forest given by parent pointers (each entry a valid index whose
    /// chain ends at a root pointing to itself).
    pub fn from_parents(parent: Vec<u32>) -> Self {
        let mut uf = UnionFind {
            size: vec![0; parent.len()],
            parent,
        };
        for i in 0..uf.parent.len() as u32 {
            let r = uf.find(i);
            uf.size[r as usize] += 1;
        }
        uf
    }

    pub fn len(&self) -> usize {
        self.parent.len()
    }

    pub fn is_empty(&self) -> bool {
        self.parent.is_empty()
    }

    pub fn find(&mut self, mut x: u32) -> u32 {
        while self.parent[x as usize] != x {
            let grand = self.parent[self.parent[x as usize] as usize];
            self.parent[x as usize] = grand;
            x = grand;
        }
        x
    }

    /// Join the sets of `a` and `b`; true when they were apart.
    pub fn union(&mut self, a: u32, b: u32) -> bool {
        let (mut ra, mut rb) = (self.find(a), self.find(b));
        if ra == rb {
            return false;
        }
        if self.size[ra as usize] < self.size[rb as usize] {
            std::mem::swap(&mut ra, &mut rb);
        }
        self.parent[rb as usize] = ra;
        self.size[ra as usize] += self.size[rb as usize];
        true
    }

    /// Component labels 0, 1, 2, … numbered in order of first appearance by
    /// index (the order scikit-learn's DBSCAN numbers its clusters in).
    pub fn labels(&mut self) -> Vec<u32> {
        let n = self.parent.len();
        let mut label_of_root = vec![u32::MAX; n];
        let mut next = 0u32;
        let mut out = Vec::with_capacity(n);
        for i in 0..n as u32 {
            let r = self.find(i) as usize;
            if label_of_root[r] == u32::MAX {
                label_of_root[r] = next;
                next += 1;
            }
            out.push(label_of_root[r]);
        }
        out
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn joins_and_labels() {
        let mut uf = UnionFind::new(5);
        assert!(uf.union(3, 1));
        assert!(!uf.union(1, 3));
        assert!(uf.union(4, 0));
        assert_eq!(uf.labels(), vec![0, 1, 2, 1, 0]);
    }
}
