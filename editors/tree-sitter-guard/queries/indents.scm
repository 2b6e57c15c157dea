; One level per block body; the closing brace goes back out.
(body) @indent
"}" @outdent
