/**
 * Whether a parsed model uses families, each blocks, parts or qualified names at all: a flat model skips
 * the elaboration (the same tree goes on to the binder).
 */
import type * as A from '../syntax/ast';

export function usesFamilies(file: A.ModelFile): boolean {
  const exprHas = (e: A.Expr | undefined): boolean => {
    // iterative: expressions may be very deep
    const stack: (A.Expr | undefined)[] = [e];
    while (stack.length) {
      const x = stack.pop();
      if (!x) continue;
      switch (x.kind) {
        case 'name': if (x.index || x.name.includes('.')) return true; break;
        case 'list':
        case 'reduce': return true;
        case 'unary': stack.push(x.arg); break;
        case 'binary': stack.push(x.left, x.right); break;
        case 'call': for (const a of x.args) stack.push(a); break;
      }
    }
    return false;
  };
  const identHas = (id: A.Ident): boolean => !!id.range || !!id.index || id.name.includes('.');
  for (const st of file.statements) {
    switch (st.kind) {
      case 'each': case 'part': case 'place': case 'parts': return true;
      case 'const': if (identHas(st.name) || exprHas(st.value)) return true; break;
      case 'input': case 'state': case 'var': if (st.names.some(identHas)) return true; break;
      case 'output': if (identHas(st.name) || exprHas(st.value)) return true; break;
      case 'equation': if (exprHas(st.lhs) || exprHas(st.rhs)) return true; break;
      case 'point': if (st.lines.some((l) => l.index || l.name.name.includes('.') || exprHas(l.value))) return true; break;
      case 'sweep': if (st.vary?.name.index) return true; break;
      case 'linear': if (st.at.some((x) => x.name.index) || st.equations.some((q) => exprHas(q.lhs) || exprHas(q.rhs)) || st.at.some((x) => exprHas(x.value))) return true; break;
    }
  }
  return false;
}
