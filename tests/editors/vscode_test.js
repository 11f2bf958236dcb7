// vscode_test.js KNOWABLE - what can be tested of editors/vscode without VS
// Code: the manifest has what an extension needs, and extension.js, loaded
// in node with stand-ins for the `vscode` and `vscode-languageclient/node`
// modules, starts the configured `knowable lsp` and serves the documents
// its selector names.  The stand-in client does what the real one would do
// first: it starts the server it is given (a real `knowable lsp`
// process), initializes it, opens a schema the selector matches and waits
// for its diagnostics; stop() shuts the server down.  Not tested: VS Code
// itself, the real client library, packaging.  Prints one line per check;
// exits 0 when all held, 1 otherwise.
'use strict';

const assert = require('assert');
const childProcess = require('child_process');
const fs = require('fs');
const Module = require('module');
const path = require('path');

const knowable = path.resolve(process.argv[2]);
const src = path.resolve(__dirname, '..', '..');
const extDir = path.join(src, 'editors', 'vscode');
const lspDir = path.join(src, 'tests', 'lsp');
let checks = 0;

function check(cond, what) {
    assert.ok(cond, what);
    checks++;
    console.log('ok - ' + what);
}

// --- The manifest ----------------------------------------------------------

const manifest = JSON.parse(fs.readFileSync(path.join(extDir, 'package.json'), 'utf8'));
for (const key of ['name', 'version', 'publisher', 'main']) {
    check(typeof manifest[key] === 'string' && manifest[key] !== '', `package.json has "${key}"`);
}
check(/^\d+\.\d+\.\d+$/.test(manifest.version), 'its version is MAJOR.MINOR.PATCH');
check(/^\^?\d+\.\d+\.\d+$/.test((manifest.engines || {}).vscode || ''), 'engines.vscode names a version');
check(fs.existsSync(path.join(extDir, manifest.main)), `main (${manifest.main}) exists`);
check(Array.isArray(manifest.activationEvents) && manifest.activationEvents.includes('onLanguage:yaml'),
    'it is activated when a YAML file is opened');
check(/^\^?\d/.test((manifest.dependencies || {})['vscode-languageclient'] || ''),
    'it depends on vscode-languageclient');
const props = ((manifest.contributes || {}).configuration || {}).properties || {};
for (const key of ['knowable.path', 'knowable.args', 'knowable.documents']) {
    check(props[key] && 'default' in props[key] && typeof props[key].description === 'string',
        `setting ${key} has a default and a description`);
}

// --- Stand-ins for the modules VS Code provides ------------------------------

// The settings the stand-in workspace answers: the manifest's defaults,
// with the path of the knowable under test.
const settings = {};
for (const [key, p] of Object.entries(props)) {
    settings[key] = p.default;
}
settings['knowable.path'] = knowable;

function frame(msg) {
    const body = Buffer.from(JSON.stringify(msg), 'utf8');
    return Buffer.concat([Buffer.from(`Content-Length: ${body.length}\r\n\r\n`), body]);
}

// A glob of a document filter as VS Code reads it: ** any folders, * and ?
// within one name, {a,b} alternatives.
function globToRegExp(glob) {
    let re = '';
    for (let i = 0; i < glob.length; i++) {
        const c = glob[i];
        if (glob.startsWith('**/', i)) {
            re += '(?:.*/)?';
            i += 2;
        } else if (glob.startsWith('**', i)) {
            re += '.*';
            i += 1;
        } else if (c === '*') {
            re += '[^/]*';
        } else if (c === '?') {
            re += '[^/]';
        } else if (c === '{') {
            re += '(?:';
        } else if (c === '}') {
            re += ')';
        } else if (c === ',') {
            re += '|';
        } else {
            re += c.replace(/[.+^$()|[\]\\]/g, '\\$&');
        }
    }
    return new RegExp('^' + re + '$');
}

class StandInClient {
    constructor(id, name, serverOptions, clientOptions) {
        StandInClient.made.push(this);
        Object.assign(this, { id, name, serverOptions, clientOptions });
        this.waiting = [];
        this.received = [];
    }

    serves(file) {
        return this.clientOptions.documentSelector.some((f) =>
            f.scheme === 'file' && (!f.language || f.language === 'yaml') && globToRegExp(f.pattern).test(file));
    }

    send(msg) {
        this.proc.stdin.write(frame(Object.assign({ jsonrpc: '2.0' }, msg)));
    }

    // The next message from the server that pred accepts.
    next(pred) {
        return new Promise((resolve, reject) => {
            if (this.status !== undefined) {
                reject(new Error(`the server exited with status ${this.status}`));
                return;
            }
            this.waiting.push({ pred, resolve, reject });
            this.deliver();
        });
    }

    deliver() {
        for (let i = 0; i < this.received.length; i++) {
            const w = this.waiting.findIndex((x) => x.pred(this.received[i]));
            if (w >= 0) {
                const [msg] = this.received.splice(i, 1);
                const [{ resolve }] = this.waiting.splice(w, 1);
                resolve(msg);
                i--;
            }
        }
    }

    read(chunk) {
        this.buf = Buffer.concat([this.buf, chunk]);
        for (;;) {
            const end = this.buf.indexOf('\r\n\r\n');
            if (end < 0) {
                return;
            }
            const m = /Content-Length: *(\d+)/i.exec(this.buf.slice(0, end).toString());
            const len = Number(m[1]);
            if (this.buf.length < end + 4 + len) {
                return;
            }
            this.received.push(JSON.parse(this.buf.slice(end + 4, end + 4 + len).toString('utf8')));
            this.buf = this.buf.slice(end + 4 + len);
            this.deliver();
        }
    }

    async start() {
        const { command, args } = this.serverOptions;
        this.proc = childProcess.spawn(command, args, { stdio: ['pipe', 'pipe', 'inherit'] });
        this.exited = new Promise((resolve) =>
            this.proc.on('exit', (code) => {
                this.status = code;
                for (const w of this.waiting.splice(0)) {
                    w.reject(new Error(`the server exited with status ${code}`));
                }
                resolve(code);
            }));
        this.buf = Buffer.alloc(0);
        this.proc.stdout.on('data', (chunk) => this.read(chunk));
        this.send({ id: 1, method: 'initialize', params: { processId: process.pid, rootUri: null, capabilities: {} } });
        this.capabilities = (await this.next((m) => m.id === 1)).result.capabilities;
        this.send({ method: 'initialized', params: {} });
    }

    async stop() {
        this.send({ id: 2, method: 'shutdown' });
        await this.next((m) => m.id === 2);
        this.send({ method: 'exit' });
        return this.exited;
    }
}
StandInClient.made = [];

const standIns = {
    vscode: {
        workspace: {
            getConfiguration: (section) => ({
                get: (key, dflt) => {
                    const v = settings[`${section}.${key}`];
                    return v === undefined ? dflt : v;
                },
            }),
        },
    },
    'vscode-languageclient/node': { LanguageClient: StandInClient },
};
const resolve = Module._resolveFilename;
Module._resolveFilename = function (request, ...rest) {
    return request in standIns ? request : resolve.call(this, request, ...rest);
};
for (const [name, exports] of Object.entries(standIns)) {
    require.cache[name] = { id: name, filename: name, loaded: true, exports, children: [] };
}

// --- The extension -------------------------------------------------------------

async function main() {
    const ext = require(path.join(extDir, manifest.main));
    check(typeof ext.activate === 'function' && typeof ext.deactivate === 'function',
        'extension.js exports activate and deactivate');
    await ext.activate({ subscriptions: [] });
    check(StandInClient.made.length === 1, 'activation makes one language client');
    const client = StandInClient.made[0];
    check(client.serverOptions.command === knowable && client.serverOptions.args[0] === 'lsp',
        'it runs `knowable lsp` from the knowable.path setting');
    check(client.capabilities && client.capabilities.textDocumentSync && client.capabilities.hoverProvider,
        'the server it started answered initialize');

    const schema = path.join(lspDir, 'bakery', 'unsold.knowable.yaml');
    const register = path.join(lspDir, 'bakery', 'register', 'ovens.yaml');
    check(client.serves(schema), 'the selector serves a schema (*.knowable.yaml)');
    check(client.serves(register), 'and a register it includes (register/*.yaml)');
    check(!client.serves(path.join(lspDir, 'bakery-strict', '.knowable-rules.yaml')),
        'but not a rulebook');
    check(!client.serves(path.join(src, 'meson.build')), 'nor a file that is not YAML-named');

    const uri = 'file://' + schema;
    client.send({
        method: 'textDocument/didOpen',
        params: { textDocument: { uri, languageId: 'yaml', version: 1, text: fs.readFileSync(schema, 'utf8') } },
    });
    const diags = await client.next((m) => m.method === 'textDocument/publishDiagnostics' && m.params.uri === uri);
    const codes = diags.params.diagnostics.map((d) => `${d.code}@${d.range.start.line + 1}`);
    check(codes.includes('after-moment@16') && codes.includes('inherits-late-input@28'),
        `the schema's diagnostics arrive (${codes.join(', ')})`);

    const code = await ext.deactivate();
    check(code === 0, 'deactivate shuts the server down (exit status 0 after shutdown and exit)');
    console.log(`${checks} checks held`);
}

const timer = setTimeout(() => {
    console.log('FAIL: no answer within 60 s');
    process.exit(1);
}, 60000);
main().then(() => clearTimeout(timer), (err) => {
    console.log('FAIL: ' + (err && err.message ? err.message : err));
    process.exit(1);
});
