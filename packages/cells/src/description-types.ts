/**
 * The shapes of a model description as types (description.ts checks them and says what each field means in a
 * file): what a weight file stores and `buildModel` builds.
 */
/** The cells weft builds itself, by their word in a description. */
export type BuiltInCellKind = 'lstm' | 'gru' | 'plain';

/** Inputs that are token ids, looked up in a trained embedding table. */
export interface EmbeddingInput {
  /** Marks token-id input. */
  readonly kind: 'embedding';
  /** How many distinct tokens there are (ids run from 0 to vocabulary − 1). */
  readonly vocabulary: number;
  /** Width of each token's embedding vector, the first layer's input width. */
  readonly width: number;
}

/** Inputs that are numbers: `width` values per step. */
export interface ValuesInput {
  /** Marks numeric input. */
  readonly kind: 'values';
  /** Values per step (features). */
  readonly width: number;
}

/** One recurrent layer of a model description. */
export interface LayerDescription {
  /** `lstm`, `gru`, `plain`, or the kind of a cell registered with the builder. */
  readonly cell: string;
  /** Hidden size of the layer's cell (per direction). */
  readonly hidden: number;
  /** Run a second cell backward in time and join both outputs (width 2 × hidden); default false. */
  readonly bidirectional?: boolean;
  /**
   * Run the layer's one cell backward in time only (each row from its last valid step to its first; outputs put back
   * in time order), its parameters named `backward`; default false. Not with `bidirectional`.
   */
  readonly reverse?: boolean;
  /** LSTM only. */
  readonly peepholes?: boolean;
  /** LSTM only. */
  readonly forgetBias?: number;
  /** GRU only. */
  readonly resetAfterProduct?: boolean;
  /** Plain only: `tanh` or `relu`. */
  readonly activation?: 'tanh' | 'relu';
}

/** The affine map from the last layer's output to the model's output at each step. */
export interface ReadoutDescription {
  /** Output width: classes (or tokens) for classification, values for forecasting. */
  readonly width: number;
}

/** A sequence model as plain data (JSON): what a weight file stores and `buildModel` builds. */
export interface ModelDescription {
  /** What the model reads at each step. */
  readonly input: EmbeddingInput | ValuesInput;
  /** The recurrent layers, first to last (stacked: each reads the one before). */
  readonly layers: readonly LayerDescription[];
  /** Dropout rate between layers and before the readout while training, in [0, 1); default 0. */
  readonly dropout?: number;
  /** The readout; absent or null to output the last layer's states. */
  readonly readout?: ReadoutDescription | null;
}

/**
 * An encoder-decoder (Sutskever, Vinyals & Le 2014; Cho et al. 2014): the encoder reads the source tokens, and its
 * final state is the decoder's initial state; the decoder reads the target tokens shifted right (starting with a
 * start token) and predicts the next target token through its readout. Encoder and decoder layers match one to one
 * in cell kind and hidden size; decoder layer i starts from the final state of encoder layer i's last cell (its
 * backward cell when the layer is bidirectional or reverse: that cell ends on the first source token, as Bahdanau
 * et al. 2015 start the decoder from the backward state there). Decoder layers run forward in time only; both inputs
 * are embeddings. `reverseSource` feeds each source sequence reversed within its length (Sutskever et al. 2014, §3.3).
 * `attention` (Luong, Pham & Manning 2015, global attention) lets each decoding step look at every encoder output:
 * see `attend` and EncoderDecoderModel.
 *
 *   { "kind": "encoder-decoder", "reverseSource": true, "attention": "general",
 *     "encoder": { "input": {embedding}, "layers": [...] },
 *     "decoder": { "input": {embedding}, "layers": [...], "readout": { "width": V } } }
 */
export interface EncoderDecoderDescription {
  /** Marks an encoder-decoder. */
  readonly kind: 'encoder-decoder';
  /** Reads the source sequence; its final state starts the decoder. */
  readonly encoder: ModelDescription;
  /** Generates the target sequence, one token per step, from the encoder's final state. */
  readonly decoder: ModelDescription;
  /** Feed the source to the encoder in reverse order (Sutskever, Vinyals & Le 2014); default false. */
  readonly reverseSource?: boolean;
  /**
   * How each decoding step scores the encoder's outputs: `dot` (h·h̄; the encoder's output width must equal the
   * decoder's hidden size), `general` (h·W h̄), `additive` (v·tanh(W h + U h̄)); absent or null for no attention.
   */
  readonly attention?: AttentionForm | null;
}

/** The score functions of attention (Luong et al. 2015, eq. 8; `additive` is Bahdanau et al. 2015's). */
export type AttentionForm = 'dot' | 'general' | 'additive';

/** Either kind of model description. */
export type AnyModelDescription = ModelDescription | EncoderDecoderDescription;
