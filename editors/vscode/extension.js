// extension.js - `knowable lsp` in VS Code: one language client, started
// when a YAML file is opened, serving the schemas and the registers they
// include (one server for all of them, so that an unsaved register is seen
// by the schemas that include it).  The settings are in package.json.
'use strict';

const vscode = require('vscode');
const { LanguageClient } = require('vscode-languageclient/node');

let client;

function activate() {
    const config = vscode.workspace.getConfiguration('knowable');
    const server = {
        command: config.get('path', 'knowable'),
        args: ['lsp', ...config.get('args', [])],
    };
    const documents = config.get('documents', ['**/*.knowable.yaml', '**/register/*.yaml']);
    client = new LanguageClient('knowable', 'knowable', server, {
        documentSelector: documents.map((pattern) => ({ scheme: 'file', language: 'yaml', pattern })),
    });
    return client.start();
}

function deactivate() {
    const c = client;
    client = undefined;
    return c ? c.stop() : undefined;
}

module.exports = { activate, deactivate };
