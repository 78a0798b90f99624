// placeholder entry until the language server lands; see issue 3.
