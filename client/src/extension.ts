// placeholder entry until the extension client lands; see issue 5.
